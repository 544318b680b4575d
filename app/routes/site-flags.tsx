import { data, Form, Link, useNavigation, useSearchParams } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/site-flags";
import { requireSite } from "~/services/session.server";
import { EmptyState } from "~/components/empty-state";
import { listFlags, setFlagState } from "~/models/flags.server";
import type { FlagState } from "~/db/schema";
import { can } from "~/permissions";
import { cached } from "~/services/change-feed.server";
import { CONFIDENCE_HINT } from "~/domain/strings-out";

export const meta: Route.MetaFunction = () => [{ title: "Flags · Sunsift" }];

const PAGE_SIZE = 25;
// Our words for flag states; this screen sets `new` and `dismissed`, later steps move the rest.
const FLAG_STATES = ["new", "explained", "needs flight", "in field", "verifying", "recovered", "dismissed"] as const satisfies readonly FlagState[];
const SETTABLE_STATES = ["new", "dismissed"] as const satisfies readonly FlagState[];
const FLAG_SORTS = ["lost", "since", "strings", "combiner", "state", "confidence", "todate"] as const;
type FlagSort = (typeof FLAG_SORTS)[number];

function readQuery(url: URL) {
  const st = url.searchParams.get("state") ?? "open";
  const state = st === "all" || st === "open" || (FLAG_STATES as readonly string[]).includes(st) ? (st as FlagState | "open" | "all") : "open";
  const sortRaw = url.searchParams.get("sort") ?? "lost";
  const sort = (FLAG_SORTS as readonly string[]).includes(sortRaw) ? (sortRaw as FlagSort) : "lost";
  const dir = url.searchParams.get("dir") === "asc" ? "asc" : url.searchParams.get("dir") === "desc" ? "desc" : undefined;
  const page = Math.max(1, Number(url.searchParams.get("page") ?? 1) || 1);
  const q = (url.searchParams.get("q") ?? "").slice(0, 60);
  return { state, sort, dir, page, q } as const;
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site, principal } = await requireSite(request, params.siteId, "flags:view");
  const query = readQuery(new URL(request.url));
  // Cached until flags or the analysis change (see change-feed.server.ts).
  const res = await cached(`flags:${site.id}:${JSON.stringify(query)}`, () => listFlags(site.id, { ...query, q: query.q || undefined, pageSize: PAGE_SIZE }));
  return {
    site: { id: site.id, name: site.name, currency: site.settings.currency, tariff: site.settings.tariffPerMwh },
    ...res,
    query,
    canTriage: can(principal.roles, "flags:triage"),
    canOrder: can(principal.roles, "workorders:manage"),
  };
}

const stateForm = z
  .object({
    flagId: z.string().uuid(),
    state: z.enum(SETTABLE_STATES, { error: "Choose the new state first" }),
    reason: z.string().trim().max(500, "Keep the reason under 500 characters"),
  })
  .refine((v) => v.state !== "dismissed" || v.reason.length >= 3, { path: ["reason"], message: "Say why the flag is dismissed" });

export async function action({ request, params }: Route.ActionArgs) {
  const { site, principal } = await requireSite(request, params.siteId, "flags:triage");
  const form = Object.fromEntries(await request.formData());
  const parsed = stateForm.safeParse(form);
  if (!parsed.success) {
    const msg = parsed.error.issues[0]?.message ?? "Check the form";
    return data({ ok: false as const, flagId: String(form.flagId ?? ""), error: msg }, { status: 400 });
  }
  const res = await setFlagState(principal, site.id, parsed.data.flagId, parsed.data.state, parsed.data.reason);
  if (!res.ok) return data({ ok: false as const, flagId: parsed.data.flagId, error: res.error }, { status: 404 });
  return { ok: true as const, flagId: parsed.data.flagId, error: null };
}

const COLUMNS: { key: FlagSort | null; label: string; title?: string }[] = [
  { key: "combiner", label: "Combiner" },
  { key: null, label: "Block" },
  { key: "strings", label: "Strings out" },
  { key: "confidence", label: "Confidence", title: CONFIDENCE_HINT },
  { key: "lost", label: "Lost kWh/day" },
  { key: "todate", label: "Lost to date" },
  { key: "since", label: "Since" },
  { key: "state", label: "State" },
];

export default function Screen({ loaderData, actionData }: Route.ComponentProps) {
  const { site, items, total, page, pageSize, query, canTriage, canOrder } = loaderData;
  const [params] = useSearchParams();
  const nav = useNavigation();
  const pages = Math.max(1, Math.ceil(total / pageSize));
  const href = (patch: Record<string, string | number | null>) => {
    const p = new URLSearchParams(params);
    for (const [k, v] of Object.entries(patch)) v == null ? p.delete(k) : p.set(k, String(v));
    return `?${p}`;
  };
  const csvParams = new URLSearchParams({ state: query.state, ...(query.q ? { q: query.q } : {}) });
  return (
    <div className="space-y-4">
      <div className="flex flex-wrap items-end justify-between gap-3">
        <h1 className="h1">Flags <span className="text-muted">· {site.name}</span></h1>
        <a className="btn-secondary" href={`/sites/${site.id}/flags.csv?${csvParams}`} download>Export CSV</a>
      </div>
      <Form method="get" className="panel flex flex-wrap items-end gap-3" role="search">
        <div>
          <label className="label" htmlFor="f-state">Show</label>
          <select id="f-state" name="state" className="input" defaultValue={query.state}>
            <option value="open">Open flags</option>
            <option value="all">All flags</option>
            {FLAG_STATES.map((s) => <option key={s} value={s}>State: {s}</option>)}
          </select>
        </div>
        <div>
          <label className="label" htmlFor="f-q">Combiner or block</label>
          <input id="f-q" name="q" className="input" defaultValue={query.q} placeholder="e.g. B1-I2" />
        </div>
        <input type="hidden" name="sort" value={query.sort} />
        <button className="btn" type="submit">Filter</button>
      </Form>
      {items.length === 0 ? (
        <EmptyState title="No flags here">Flags appear when a combiner stays below its peers for several days with at least half a string missing. Cloudy days, clipping, dirty blocks and bad data never raise one.</EmptyState>
      ) : (
        <div className="panel overflow-x-auto p-0">
          <table className="table" aria-describedby="flags-count">
            <thead>
              <tr>
                {COLUMNS.map((c) => {
                  const active = c.key === query.sort;
                  const nextDir = active && (query.dir ?? (c.key === "combiner" || c.key === "since" ? "asc" : "desc")) === "desc" ? "asc" : "desc";
                  return (
                    <th key={c.label} title={c.title} aria-sort={active ? ((query.dir ?? (c.key === "combiner" || c.key === "since" ? "asc" : "desc")) === "asc" ? "ascending" : "descending") : undefined}>
                      {c.key ? <Link className="underline-offset-2 hover:underline" to={href({ sort: c.key, dir: active ? nextDir : null, page: null })}>{c.label}{active ? (nextDir === "asc" ? " ▼" : " ▲") : ""}</Link> : c.label}
                    </th>
                  );
                })}
                {canOrder ? <th>Field work</th> : null}
                {canTriage ? <th>Change state</th> : null}
              </tr>
            </thead>
            <tbody>
              {items.map((f) => (
                <tr key={f.id} data-testid="flag-row">
                  <td><Link className="font-medium text-brand underline" to={`/sites/${site.id}/combiners/${f.combinerId}`}>{f.combiner}</Link></td>
                  <td>{f.block ?? "—"}</td>
                  <td>{f.stringsOut} of {f.stringCount ?? "?"}</td>
                  <td>{Math.round(f.confidence * 100)} %</td>
                  <td>{Math.round(f.lostKwhPerDay)} <span className="text-muted">({((f.lostKwhPerDay / 1000) * site.tariff).toFixed(2)} {site.currency}/day)</span></td>
                  <td>{Math.round(f.lostKwhToDate)} kWh</td>
                  <td>{f.firstDay}</td>
                  <td>{f.state}{f.stateReason ? <span className="block text-xs text-muted">{f.stateReason}</span> : null}</td>
                  {canOrder ? (
                    <td>
                      {f.open && f.state !== "dismissed" ? (
                        <Link className="text-brand underline" to={`/sites/${site.id}/work-orders/new?flagId=${f.id}`} aria-label={`Create a work order for ${f.combiner}`}>Create work order</Link>
                      ) : <span className="text-muted">—</span>}
                    </td>
                  ) : null}
                  {canTriage ? (
                    <td>
                      <Form method="post" className="flex flex-wrap items-start gap-1">
                        <input type="hidden" name="flagId" value={f.id} />
                        <label className="sr-only" htmlFor={`st-${f.id}`}>New state for {f.combiner}</label>
                        <select id={`st-${f.id}`} name="state" className="input w-auto py-1" defaultValue="" required>
                          <option value="" disabled>Choose…</option>
                          {SETTABLE_STATES.map((s) => <option key={s} value={s}>{s}</option>)}
                        </select>
                        <label className="sr-only" htmlFor={`re-${f.id}`}>Reason</label>
                        <input id={`re-${f.id}`} name="reason" className="input w-40 py-1" placeholder="Reason" />
                        <button className="btn-secondary py-1" type="submit" disabled={nav.state === "submitting"}>Save</button>
                        {actionData && actionData.flagId === f.id && actionData.error ? <p role="alert" className="field-error w-full">{actionData.error}</p> : null}
                      </Form>
                    </td>
                  ) : null}
                </tr>
              ))}
            </tbody>
          </table>
          <p className="border-t border-line p-3 text-sm text-muted" data-testid="confidence-hint">{CONFIDENCE_HINT}</p>
        </div>
      )}
      <nav className="flex items-center justify-between text-sm" aria-label="Pages">
        <p id="flags-count" className="text-muted">{total} flag{total === 1 ? "" : "s"} · page {page} of {pages}</p>
        <div className="flex gap-2">
          {page > 1 ? <Link className="btn-secondary" to={href({ page: page - 1 })}>Previous</Link> : null}
          {page < pages ? <Link className="btn-secondary" to={href({ page: page + 1 })}>Next</Link> : null}
        </div>
      </nav>
    </div>
  );
}
