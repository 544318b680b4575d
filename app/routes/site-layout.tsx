import { useMemo, useState } from "react";
import { data, Form, useNavigation } from "react-router";
import type { Route } from "./+types/site-layout";
import { requireSite, forbidden } from "~/services/session.server";
import { drawingStrings, importLayout, layoutTree } from "~/models/layout.server";
import { CONFIRM_DROP } from "~/domain/import/layout";
import { can } from "~/permissions";
import { EmptyState } from "~/components/empty-state";
import { PlantDrawing } from "~/components/plant-drawing";
import { decodeUploadText } from "~/lib/upload-text";

export const meta: Route.MetaFunction = () => [{ title: "Layout · Sunsift" }];

const MAX_LAYOUT_BYTES = 20 * 1024 * 1024;

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site, principal } = await requireSite(request, params.siteId, "layout:view");
  const [tree, strings] = await Promise.all([layoutTree(site.id), drawingStrings(site.id)]);
  return { site: { id: site.id, name: site.name }, tree, strings, canImport: can(principal.roles, "layout:import") };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { site, principal } = await requireSite(request, params.siteId, "layout:import");
  if (!can(principal.roles, "layout:import")) forbidden();
  const form = await request.formData();
  const intent = form.get("intent");
  let text: string;
  let fileName = "layout.csv";
  if (intent === "preview") {
    const file = form.get("file");
    if (!(file instanceof File) || file.size === 0) return data({ stage: "error" as const, message: "Choose a layout CSV file first.", result: null, text: null, fileName }, { status: 400 });
    if (file.size > MAX_LAYOUT_BYTES) return data({ stage: "error" as const, message: `The file is ${(file.size / 1e6).toFixed(1)} MB; a layout may be at most 20 MB.`, result: null, text: null, fileName }, { status: 400 });
    fileName = file.name;
    const decoded = decodeUploadText(new Uint8Array(await file.arrayBuffer()));
    if (!decoded.ok) return data({ stage: "error" as const, message: `The layout was not imported: ${decoded.reason} Nothing was changed.`, result: null, text: null, fileName }, { status: 400 });
    text = decoded.text;
  } else if (intent === "commit") {
    text = String(form.get("text") ?? "");
  } else {
    return data({ stage: "error" as const, message: "Unknown request", result: null, text: null, fileName }, { status: 400 });
  }
  const result = await importLayout({ orgId: principal.orgId, userId: principal.userId }, site.id, text, {
    dryRun: intent === "preview",
    confirmDropFindings: form.get("confirm") === CONFIRM_DROP,
  });
  // Strings with drone findings (or open work orders) would go: nothing changed; ask again, with the list.
  if (!result.ok && result.drops)
    return data({ stage: "confirm" as const, message: `The layout was not imported. ${result.drops.message} Nothing was changed.`, result, text, fileName }, { status: 409 });
  if (!result.ok) return data({ stage: "error" as const, message: `The layout was not imported: ${result.errorCount} problem${result.errorCount === 1 ? "" : "s"} found. Nothing was changed.`, result, text: null, fileName }, { status: 400 });
  return { stage: intent === "preview" ? ("preview" as const) : ("done" as const), message: null, result, text: intent === "preview" ? text : null, fileName };
}

type Tree = Route.ComponentProps["loaderData"]["tree"];

function LayoutTreeView({ tree, query }: { tree: Tree; query: string }) {
  const q = query.trim().toLowerCase();
  const blocks = tree.blocks
    .map((b) => ({
      ...b,
      inverters: b.inverters
        .map((i) => ({ ...i, combiners: i.combiners.filter((c) => !q || c.name.toLowerCase().includes(q) || i.name.toLowerCase().includes(q) || b.name.toLowerCase().includes(q)) }))
        .filter((i) => i.combiners.length > 0),
    }))
    .filter((b) => b.inverters.length > 0);
  if (!blocks.length) return <p className="text-muted">Nothing matches “{query}”.</p>;
  return (
    <ul className="space-y-2" data-testid="layout-tree">
      {blocks.map((b) => (
        <li key={b.id}>
          <details open={!!q || tree.blocks.length <= 2}>
            <summary className="cursor-pointer font-semibold">Block {b.name} <span className="font-normal text-muted">· {b.inverters.length} inverters</span></summary>
            <ul className="ml-5 mt-1 space-y-1">
              {b.inverters.map((i) => (
                <li key={i.id}>
                  <details open={!!q}>
                    <summary className="cursor-pointer">Inverter {i.name} <span className="text-muted">· {i.combiners.length} combiners · {i.combiners.reduce((a, c) => a + c.strings, 0)} strings</span></summary>
                    <ul className="ml-5 grid gap-x-6 sm:grid-cols-2 lg:grid-cols-3">
                      {i.combiners.map((c) => (
                        <li key={c.id} className="text-sm">{c.name} <span className="text-muted">— {c.strings} strings, {c.modules} modules</span></li>
                      ))}
                    </ul>
                  </details>
                </li>
              ))}
            </ul>
          </details>
        </li>
      ))}
    </ul>
  );
}

export default function SiteLayout({ loaderData, actionData }: Route.ComponentProps) {
  const { tree, strings, canImport, site } = loaderData;
  const nav = useNavigation();
  const [query, setQuery] = useState("");
  const names = useMemo(() => {
    const out: Record<number, string> = {};
    for (const b of tree.blocks) for (const i of b.inverters) for (const c of i.combiners) out[c.id] = c.name;
    return out;
  }, [tree]);
  const t = tree.totals;
  return (
    <div className="space-y-6">
      <h1 className="h1">Layout <span className="text-muted">· {site.name}</span></h1>
      {canImport ? (
        <section className="panel space-y-3">
          <h2 className="h2">Import a layout</h2>
          <p className="text-sm text-muted">
            One row per string: <code>block,inverter,combiner,string,modules,x,y</code> (x and y in metres on the site grid, optional).
            Re-importing a corrected file updates blocks, inverters, combiners and strings in place; they keep their history.
          </p>
          <Form method="post" encType="multipart/form-data" className="flex flex-wrap items-end gap-3">
            <input type="hidden" name="intent" value="preview" />
            <div>
              <label className="label" htmlFor="layout-file">Layout CSV</label>
              <input id="layout-file" name="file" type="file" accept=".csv,text/csv" className="input" required />
            </div>
            <button className="btn-secondary" type="submit" disabled={nav.state !== "idle"}>{nav.state === "submitting" ? "Checking…" : "Check file"}</button>
          </Form>
          {actionData?.stage === "error" ? (
            <div role="alert" className="rounded-md bg-red-50 p-3 text-bad">
              <p className="font-semibold">{actionData.message}</p>
              {actionData.result?.errors.length ? (
                <ul className="mt-2 max-h-64 list-disc overflow-auto pl-5 text-sm">
                  {actionData.result.errors.map((e, i) => <li key={i}>Line {e.line}: {e.reason}</li>)}
                </ul>
              ) : null}
            </div>
          ) : null}
          {(actionData?.stage === "preview" || actionData?.stage === "confirm") && actionData.result?.totals ? (
            <div className="space-y-3 rounded-md border border-line p-3" data-testid="layout-preview">
              {actionData.stage === "confirm" ? (
                <p role="alert" className="rounded-md bg-red-50 p-3 font-semibold text-bad">{actionData.message}</p>
              ) : (
                <p className="font-semibold">{actionData.fileName}: ready to import</p>
              )}
              {actionData.stage === "preview" && actionData.result.drops ? (
                <p role="alert" className="rounded-md bg-amber-50 p-3 text-warn" data-testid="layout-drops">{actionData.result.drops.message}</p>
              ) : null}
              <p>
                {actionData.result.totals.blocks} blocks · {actionData.result.totals.inverters} inverters · {actionData.result.totals.combiners} combiners · {actionData.result.totals.strings} strings · {actionData.result.totals.modules.toLocaleString("en")} modules
              </p>
              {actionData.result.warnings.length ? <ul className="list-disc pl-5 text-sm text-warn">{actionData.result.warnings.slice(0, 20).map((w, i) => <li key={i}>Line {w.line}: {w.reason}</li>)}</ul> : null}
              <div className="overflow-x-auto">
                <table className="table">
                  <thead><tr><th>Block</th><th>Inverter</th><th>Combiner</th><th>String</th><th>Modules</th><th>x</th><th>y</th></tr></thead>
                  <tbody>{actionData.result.preview.map((r, i) => <tr key={i}><td>{r.block}</td><td>{r.inverter}</td><td>{r.combiner}</td><td>{r.string}</td><td>{r.modules}</td><td>{r.x ?? "—"}</td><td>{r.y ?? "—"}</td></tr>)}</tbody>
                </table>
              </div>
              <Form method="post">
                <input type="hidden" name="intent" value="commit" />
                <input type="hidden" name="text" value={actionData.text ?? ""} />
                {actionData.result.drops ? (
                  <label className="mb-2 flex items-start gap-2 text-sm">
                    <input type="checkbox" name="confirm" value={CONFIRM_DROP} required />
                    <span>
                      Remove those strings
                      {actionData.result.drops.findings ? ` and delete the ${actionData.result.drops.findings} drone finding${actionData.result.drops.findings === 1 ? "" : "s"} on them` : ""}
                    </span>
                  </label>
                ) : null}
                <button className="btn" type="submit" disabled={nav.state !== "idle"}>{nav.state === "submitting" ? "Importing…" : "Import this layout"}</button>
              </Form>
            </div>
          ) : null}
          {actionData?.stage === "done" && actionData.result?.totals ? (
            <p role="status" className="rounded-md bg-green-50 p-3 text-ok">
              Layout imported: {actionData.result.totals.combiners} combiners, {actionData.result.totals.strings} strings.
            </p>
          ) : null}
        </section>
      ) : null}

      {t.combiners === 0 ? (
        <EmptyState title="No layout imported">{canImport ? "Import the plant layout above to see the plant." : "A performance engineer imports the plant layout here."}</EmptyState>
      ) : (
        <>
          <p className="text-lg" data-testid="layout-totals">
            <strong>{t.blocks}</strong> blocks · <strong>{t.inverters}</strong> inverters · <strong>{t.combiners}</strong> combiners · <strong>{t.strings}</strong> strings · <strong>{t.modules.toLocaleString("en")}</strong> modules
          </p>
          <div className="grid gap-6 lg:grid-cols-5">
            <section className="panel lg:col-span-2">
              <label className="label" htmlFor="layout-search">Search</label>
              <input id="layout-search" className="input mb-3" placeholder="Block, inverter or combiner, e.g. B2-I3-C05" value={query} onChange={(e) => setQuery(e.target.value)} />
              <div className="max-h-[560px] overflow-auto"><LayoutTreeView tree={tree} query={query} /></div>
            </section>
            <section className="lg:col-span-3">
              {strings.length ? (
                <PlantDrawing strings={strings} combinerNames={names} title="Plant drawing: one mark per string" height={560}
                  highlight={query ? (() => { const id = Object.entries(names).find(([, n]) => n.toLowerCase() === query.trim().toLowerCase())?.[0]; return id ? { combinerId: Number(id) } : null; })() : null} />
              ) : (
                <EmptyState title="No positions">The layout has no x/y columns, so the plant cannot be drawn.</EmptyState>
              )}
            </section>
          </div>
        </>
      )}
    </div>
  );
}
