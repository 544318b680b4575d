import { data, Form, Link, redirect, useNavigation } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/site-work-order-new";
import { requireSite } from "~/services/session.server";
import { assignableUsers, createWorkOrder, findingOnSite, prefillFromFinding, prefillFromFlag, siteBlocks, siteCombiners } from "~/models/work-orders.server";
import { PRIORITIES } from "~/db/schema";
import { addDays, localDay, whatToCheck } from "~/domain/work-orders";
import { SafetyBlock } from "~/components/safety-block";

export const meta: Route.MetaFunction = () => [{ title: "New work order · Sunsift" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site, principal } = await requireSite(request, params.siteId, "workorders:manage");
  const url = new URL(request.url);
  const flagId = url.searchParams.get("flagId");
  const findingId = url.searchParams.get("findingId");
  const prefill = flagId ? await prefillFromFlag(site.id, flagId) : findingId ? await prefillFromFinding(site.id, findingId) : null;
  const [combiners, blocks, people] = await Promise.all([siteCombiners(site.id), siteBlocks(site.id), assignableUsers(principal.orgId)]);
  const today = localDay(new Date(), site.timezone);
  return {
    site: { id: site.id, name: site.name },
    prefill,
    missing: (flagId || findingId) && !prefill ? (flagId ? "That flag was not found on this site." : "That finding was not found on this site.") : null,
    combiners,
    blocks,
    people: people.map((p) => ({ id: p.id, name: p.name, roles: p.roles })),
    defaultDue: addDays(today, 7),
    today,
  };
}

const schema = z.object({
  combiner: z.string().trim().max(100).optional(),
  block: z.string().trim().max(100).optional(),
  strings: z
    .string()
    .trim()
    .regex(/^(\d{1,3}(\s*,\s*\d{1,3})*)?$/, "Strings are numbers separated by commas, e.g. 7 or 3, 4")
    .optional(),
  title: z.string().trim().min(3, "Give a short title").max(200),
  whatToCheck: z.string().trim().max(4000).optional(),
  assigneeId: z.string().trim().optional(),
  dueOn: z.union([z.literal(""), z.string().regex(/^\d{4}-\d{2}-\d{2}$/, "Choose a due date")]).optional(),
  priority: z.enum(PRIORITIES).default("normal"),
  // Hidden fields, filled when the work order starts from a flag or a finding.
  flagId: z.union([z.literal(""), z.uuid("The flag this work order came from is not one Sunsift knows. Open the flag again and start from there.")]).optional(),
  findingId: z.union([z.literal(""), z.uuid("The finding this work order came from is not one Sunsift knows. Open the finding again and start from there.")]).optional(),
});

export async function action({ request, params }: Route.ActionArgs) {
  const { site, principal } = await requireSite(request, params.siteId, "workorders:manage");
  const form = Object.fromEntries(await request.formData());
  const parsed = schema.safeParse(form);
  const errors: Record<string, string> = {};
  if (!parsed.success) {
    for (const i of parsed.error.issues) errors[String(i.path[0])] ??= i.message;
    errors.form ??= errors.flagId ?? errors.findingId;
    return data({ errors }, { status: 400 });
  }
  const v = parsed.data;
  if (v.findingId && !(await findingOnSite(site.id, v.findingId)))
    return data({ errors: { form: "That drone finding is not on this site. Open the finding again and start from there." } }, { status: 400 });
  const combiners = await siteCombiners(site.id);
  const comb = v.combiner ? combiners.find((c) => c.name.toLowerCase() === v.combiner!.toLowerCase()) : undefined;
  if (v.combiner && !comb) errors.combiner = `No combiner named “${v.combiner}” on this site.`;
  const blocks = await siteBlocks(site.id);
  const blk = v.block ? blocks.find((b) => b.name.toLowerCase() === v.block!.toLowerCase()) : undefined;
  if (v.block && !blk) errors.block = `No block named “${v.block}”.`;
  if (!v.combiner && !v.block) errors.combiner = "Name the combiner (or, for block-wide work, the block).";
  const strings = v.strings ? v.strings.split(",").map((s) => Number(s.trim())).filter((n) => n > 0) : [];
  if (strings.length && !comb) errors.strings = "Strings need a combiner.";
  if (Object.keys(errors).length) return data({ errors }, { status: 400 });
  const r = await createWorkOrder({ orgId: principal.orgId, userId: principal.userId, roles: principal.roles }, site.id, {
    combinerId: comb?.id ?? null,
    blockId: blk?.id ?? null,
    stringNumbers: strings,
    flagId: v.flagId || null,
    findingId: v.findingId || null,
    title: v.title,
    whatToCheck: v.whatToCheck || whatToCheck({ combiner: comb?.name ?? null, strings, block: blk?.name ?? null }),
    assigneeId: v.assigneeId || null,
    dueOn: v.dueOn || null,
    priority: v.priority,
  });
  // A flag of another site is not a field of the form: say so at the top.
  if (!r.ok) return data({ errors: { [r.field && r.field !== "flag" ? r.field : "form"]: r.error } }, { status: 400 });
  return redirect(`/sites/${site.id}/work-orders/${r.value.id}`);
}

export default function Screen({ loaderData, actionData }: Route.ComponentProps) {
  const { site, prefill } = loaderData;
  const errors: Record<string, string> = actionData?.errors ?? {};
  const busy = useNavigation().state !== "idle";
  return (
    <div className="mx-auto max-w-3xl space-y-4">
      <p className="text-sm"><Link className="text-brand underline" to={`/sites/${site.id}/work-orders`}>← Work orders</Link></p>
      <h1 className="h1">New work order <span className="text-muted">· {site.name}</span></h1>
      {loaderData.missing ? <p className="field-error" role="alert">{loaderData.missing} Fill the work order in by hand.</p> : null}
      {prefill ? <p className="rounded-md border border-line bg-panel p-3 text-sm" data-testid="prefill-note">{prefill.note}</p> : null}
      {errors.form ? <p className="field-error" role="alert">{errors.form}</p> : null}
      <Form method="post" className="panel space-y-4" noValidate>
        {prefill?.flagId ? <input type="hidden" name="flagId" value={prefill.flagId} /> : null}
        {prefill?.findingId ? <input type="hidden" name="findingId" value={prefill.findingId} /> : null}
        <div className="grid gap-4 sm:grid-cols-3">
          <div className="sm:col-span-2">
            <label className="label" htmlFor="combiner">Combiner</label>
            <input id="combiner" name="combiner" list="combiner-names" className="input" defaultValue={prefill?.combiner ?? ""} placeholder="e.g. B1-I3-C05" autoComplete="off" />
            <datalist id="combiner-names">{loaderData.combiners.map((c) => <option key={c.id} value={c.name}>{c.stringCount} strings</option>)}</datalist>
            {errors.combiner ? <p className="field-error">{errors.combiner}</p> : null}
          </div>
          <div>
            <label className="label" htmlFor="strings">String(s)</label>
            <input id="strings" name="strings" className="input" defaultValue={prefill?.strings.join(", ") ?? ""} placeholder="e.g. 7 or 3, 4" inputMode="numeric" />
            {errors.strings ? <p className="field-error">{errors.strings}</p> : <p className="mt-1 text-xs text-muted">Leave empty when the string is not known yet.</p>}
          </div>
        </div>
        {!prefill ? (
          <div>
            <label className="label" htmlFor="block">Or a whole block (washing, vegetation…)</label>
            <select id="block" name="block" className="input" defaultValue="">
              <option value="">—</option>
              {loaderData.blocks.map((b) => <option key={b.id} value={b.name}>{b.name}</option>)}
            </select>
            {errors.block ? <p className="field-error">{errors.block}</p> : null}
          </div>
        ) : null}
        <div>
          <label className="label" htmlFor="title">Title</label>
          <input id="title" name="title" className="input" defaultValue={prefill?.title ?? ""} required />
          {errors.title ? <p className="field-error">{errors.title}</p> : null}
        </div>
        <div>
          <label className="label" htmlFor="whatToCheck">What to check</label>
          <textarea id="whatToCheck" name="whatToCheck" rows={3} className="input" defaultValue={prefill?.whatToCheck ?? ""} placeholder="Left empty, Sunsift writes it from the combiner and strings." />
        </div>
        <div className="grid gap-4 sm:grid-cols-3">
          <div>
            <label className="label" htmlFor="assigneeId">Assign to</label>
            <select id="assigneeId" name="assigneeId" className="input" defaultValue="">
              <option value="">Nobody yet</option>
              {loaderData.people.map((p) => <option key={p.id} value={p.id}>{p.name}</option>)}
            </select>
            {errors.assignee ? <p className="field-error">{errors.assignee}</p> : null}
          </div>
          <div>
            <label className="label" htmlFor="dueOn">Due</label>
            <input id="dueOn" name="dueOn" type="date" className="input" defaultValue={loaderData.defaultDue} min={loaderData.today} />
            {errors.dueOn ? <p className="field-error">{errors.dueOn}</p> : null}
          </div>
          <div>
            <label className="label" htmlFor="priority">Priority</label>
            <select id="priority" name="priority" className="input" defaultValue={prefill?.priority ?? "normal"}>
              {PRIORITIES.map((p) => <option key={p} value={p}>{p}</option>)}
            </select>
          </div>
        </div>
        <button className="btn" type="submit" disabled={busy}>{busy ? "Creating…" : "Create work order"}</button>
      </Form>
      <SafetyBlock compact />
    </div>
  );
}
