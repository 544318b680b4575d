import { data, Form, Link, useNavigation } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/site-inspections";
import { forbidden, requireSite } from "~/services/session.server";
import { ensureTemplates, getInspection, listInspections, recordInspection, scheduleInspection, scheduleRoutine } from "~/models/inspections.server";
import { assignableUsers } from "~/models/work-orders.server";
import { INSPECTION_RESULTS, type InspectionResult } from "~/db/schema";
import { localDay } from "~/domain/work-orders";
import { can } from "~/permissions";
import { photoUrl, storePhotos } from "~/services/photos.server";
import { EmptyState } from "~/components/empty-state";
import { SafetyBlock } from "~/components/safety-block";

export const meta: Route.MetaFunction = () => [{ title: "Inspections · Sunsift" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site, principal } = await requireSite(request, params.siteId, "workorders:view");
  const url = new URL(request.url);
  const page = Math.max(1, Number(url.searchParams.get("page")) || 1);
  const id = url.searchParams.get("id");
  const manage = can(principal.roles, "workorders:manage");
  const [list, templates, people, open] = await Promise.all([
    listInspections(site.id, page),
    manage ? ensureTemplates(principal.orgId) : Promise.resolve([]),
    manage ? assignableUsers(principal.orgId) : Promise.resolve([]),
    id ? getInspection(site.id, id) : Promise.resolve(null),
  ]);
  const photos = open ? open.inspection.photos.map((k) => ({ key: k, url: photoUrl(k) })) : [];
  return {
    site: { id: site.id, name: site.name },
    today: localDay(new Date(), site.timezone),
    list,
    manage,
    canWork: can(principal.roles, "workorders:work") || manage,
    templates: templates.map((t) => ({ id: t.id, name: t.name })),
    people: people.map((p) => ({ id: p.id, name: p.name })),
    open: open ? { ...open, photos } : null,
  };
}

/** The chosen assignee: empty (nobody yet), or a technician or O&M lead of the organisation. */
async function checkedAssignee(form: FormData, orgId: string): Promise<{ ok: true; id: string | null } | { ok: false; error: string }> {
  const raw = String(form.get("assigneeId") ?? "").trim();
  if (!raw) return { ok: true, id: null };
  if (!z.uuid().safeParse(raw).success || !(await assignableUsers(orgId)).some((u) => u.id === raw))
    return { ok: false, error: "Choose a technician or O&M lead of your organisation from the list." };
  return { ok: true, id: raw };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { site, principal } = await requireSite(request, params.siteId, "workorders:view");
  const manage = can(principal.roles, "workorders:manage");
  if (!manage && !can(principal.roles, "workorders:work")) forbidden();
  const form = await request.formData();
  const intent = String(form.get("intent") ?? "");
  const actor = { orgId: principal.orgId, userId: principal.userId };
  const today = localDay(new Date(), site.timezone);
  if (intent === "routine") {
    if (!manage) forbidden();
    const assignee = await checkedAssignee(form, principal.orgId);
    if (!assignee.ok) return data({ ok: null, errors: { assigneeId: assignee.error } as Record<string, string> }, { status: 400 });
    const n = await scheduleRoutine(actor, site.id, { fromDay: today, months: 3, assigneeId: assignee.id });
    return { ok: n ? `${n} inspection${n === 1 ? "" : "s"} planned.` : "The next three months are already planned.", errors: {} as Record<string, string> };
  }
  if (intent === "schedule") {
    if (!manage) forbidden();
    const v = z.object({ templateId: z.string().uuid("Choose a checklist"), dueOn: z.string().regex(/^\d{4}-\d{2}-\d{2}$/, "Choose a day") }).safeParse(Object.fromEntries(form));
    if (!v.success) return data({ ok: null, errors: Object.fromEntries(v.error.issues.map((i) => [String(i.path[0]), i.message])) as Record<string, string> }, { status: 400 });
    const assignee = await checkedAssignee(form, principal.orgId);
    if (!assignee.ok) return data({ ok: null, errors: { assigneeId: assignee.error } as Record<string, string> }, { status: 400 });
    const row = await scheduleInspection(actor, site.id, { ...v.data, assigneeId: assignee.id });
    if (!row) return data({ ok: null, errors: { templateId: "Unknown checklist" } as Record<string, string> }, { status: 400 });
    return { ok: `Planned for ${row.dueOn}.`, errors: {} as Record<string, string> };
  }
  if (intent === "record" || intent === "finish") {
    const id = String(form.get("id") ?? "");
    const found = await getInspection(site.id, id);
    if (!found) return data({ ok: null, errors: { form: "No such inspection" } as Record<string, string> }, { status: 404 });
    const results: Record<number, { result: InspectionResult | null; note: string | null }> = {};
    for (const it of found.items) {
      const r = String(form.get(`result-${it.position}`) ?? "");
      results[it.position] = { result: (INSPECTION_RESULTS as readonly string[]).includes(r) ? (r as InspectionResult) : null, note: String(form.get(`note-${it.position}`) ?? "").trim() || null };
    }
    const stored = await storePhotos(`sites/${site.id}/inspections/${id}`, form.getAll("photos").filter((f): f is File => f instanceof File));
    if (stored.error) return data({ ok: null, errors: { photos: stored.error } as Record<string, string> }, { status: 400 });
    const keys = stored.keys;
    const r = await recordInspection(actor, site.id, id, { results, notes: String(form.get("notes") ?? "").trim() || null, photos: keys, finish: intent === "finish", doneOn: today });
    if (!r.ok) return data({ ok: null, errors: { form: r.error } as Record<string, string> }, { status: 400 });
    return { ok: intent === "finish" ? "Inspection done." : "Saved.", errors: {} as Record<string, string> };
  }
  return data({ ok: null, errors: { form: "Unknown request" } as Record<string, string> }, { status: 400 });
}

export default function Screen({ loaderData, actionData }: Route.ComponentProps) {
  const { site, list, today, open } = loaderData;
  const busy = useNavigation().state !== "idle";
  const errors: Record<string, string> = actionData?.errors ?? {};
  return (
    <div className="space-y-4">
      <h1 className="h1">Inspections <span className="text-muted">· {site.name}</span></h1>
      {actionData?.ok ? <p className="rounded-md border border-ok bg-green-50 p-3 text-ok" role="status">{actionData.ok}</p> : null}
      {errors.form ? <p className="field-error" role="alert">{errors.form}</p> : null}

      {open ? (
        <section className="panel space-y-3" aria-labelledby="insp-title">
          <div className="flex items-start justify-between gap-2">
            <div>
              <h2 className="h2" id="insp-title">{open.inspection.title}</h2>
              <p className="text-sm text-muted">Due {open.inspection.dueOn} · {open.inspection.state}{open.inspection.doneOn ? ` on ${open.inspection.doneOn}` : ""}</p>
            </div>
            <Link className="btn-secondary" to="?">Close</Link>
          </div>
          <SafetyBlock compact />
          <Form method="post" encType="multipart/form-data" className="space-y-3">
            <input type="hidden" name="id" value={open.inspection.id} />
            {open.items.map((it, i) => (
              <fieldset key={it.id} className="rounded-md border border-line p-3">
                {i === 0 || open.items[i - 1]!.group !== it.group ? <p className="text-xs font-semibold uppercase text-muted">{it.group}</p> : null}
                <legend className="sr-only">{it.label}</legend>
                <p className="font-medium">{it.label}</p>
                <div className="mt-2 flex flex-wrap gap-2">
                  {INSPECTION_RESULTS.map((r) => (
                    <label key={r} className="flex cursor-pointer items-center gap-2 rounded-md border border-line px-3 py-2 has-[:checked]:border-brand has-[:checked]:bg-paper">
                      <input type="radio" name={`result-${it.position}`} value={r} defaultChecked={it.result === r} disabled={open.inspection.state === "done"} />
                      {r === "ok" ? "OK" : r === "issue" ? "Issue" : "Not checked"}
                    </label>
                  ))}
                </div>
                <input name={`note-${it.position}`} className="input mt-2" placeholder="Note (what you saw, where)" defaultValue={it.note ?? ""} aria-label={`Note: ${it.label}`} disabled={open.inspection.state === "done"} />
              </fieldset>
            ))}
            <div>
              <label className="label" htmlFor="notes">Overall notes</label>
              <textarea id="notes" name="notes" rows={3} className="input" defaultValue={open.inspection.notes ?? ""} disabled={open.inspection.state === "done"} />
            </div>
            {open.photos.length ? (
              <ul className="grid grid-cols-3 gap-2 sm:grid-cols-6">{open.photos.map((p) => <li key={p.key}><img src={p.url} alt="Inspection photo" className="aspect-square w-full rounded object-cover" /></li>)}</ul>
            ) : null}
            {open.inspection.state !== "done" && loaderData.canWork ? (
              <>
                <div>
                  <label className="label" htmlFor="insp-photos">Photos</label>
                  <input id="insp-photos" name="photos" type="file" accept="image/*" capture="environment" multiple className="input" />
                  {errors.photos ? <p className="field-error">{errors.photos}</p> : null}
                </div>
                <div className="flex flex-wrap gap-2">
                  <button className="btn-secondary" name="intent" value="record" type="submit" disabled={busy}>Save and continue later</button>
                  <button className="btn" name="intent" value="finish" type="submit" disabled={busy}>Finish inspection</button>
                </div>
              </>
            ) : null}
          </Form>
        </section>
      ) : null}

      {list.items.length === 0 ? (
        <EmptyState title="No inspections planned">An O&M lead plans the monthly walk-down and the annual in-depth inspection here.</EmptyState>
      ) : (
        <div className="panel overflow-x-auto p-0">
          <table className="table">
            <thead><tr><th>Inspection</th><th>Due</th><th>State</th><th>Technician</th><th>Issues</th></tr></thead>
            <tbody>
              {list.items.map((i) => {
                const overdue = (i.state === "scheduled" || i.state === "in progress") && i.dueOn < today;
                return (
                  <tr key={i.id} className={overdue ? "bg-red-50" : undefined} data-testid={overdue ? "inspection-overdue" : "inspection-row"}>
                    <td><Link className="text-brand underline" to={`?id=${i.id}`}>{i.title}</Link> <span className="text-xs text-muted">{i.kind}</span></td>
                    <td className={overdue ? "font-semibold text-bad" : ""}>{overdue ? `Overdue · ${i.dueOn}` : i.dueOn}</td>
                    <td>{i.state}{i.doneOn ? ` ${i.doneOn}` : ""}</td>
                    <td>{i.assignee ?? <span className="text-muted">—</span>}</td>
                    <td>{i.issues ? <span className="font-semibold text-warn">{i.issues}</span> : i.state === "done" ? "none" : ""}</td>
                  </tr>
                );
              })}
            </tbody>
          </table>
        </div>
      )}
      <div className="flex gap-3">
        {list.page > 1 ? <Link className="btn-secondary" to={`?page=${list.page - 1}`}>Previous</Link> : null}
        {list.hasMore ? <Link className="btn-secondary" to={`?page=${list.page + 1}`}>Next</Link> : null}
      </div>

      {loaderData.manage ? (
        <div className="grid gap-4 md:grid-cols-2">
          <Form method="post" className="panel space-y-3">
            <h2 className="h2">Plan the routine</h2>
            <p className="text-sm text-muted">A visual walk-down each month for the next three months, and the annual in-depth inspection if none is planned this year.</p>
            <input type="hidden" name="intent" value="routine" />
            <label className="label" htmlFor="routine-assignee">Technician</label>
            <select id="routine-assignee" name="assigneeId" className="input" defaultValue="">
              <option value="">Nobody yet</option>
              {loaderData.people.map((p) => <option key={p.id} value={p.id}>{p.name}</option>)}
            </select>
            {errors.assigneeId ? <p className="field-error">{errors.assigneeId}</p> : null}
            <button className="btn" type="submit" disabled={busy}>Plan three months</button>
          </Form>
          <Form method="post" className="panel space-y-3">
            <h2 className="h2">Plan one inspection</h2>
            <input type="hidden" name="intent" value="schedule" />
            <div>
              <label className="label" htmlFor="templateId">Checklist</label>
              <select id="templateId" name="templateId" className="input">{loaderData.templates.map((t) => <option key={t.id} value={t.id}>{t.name}</option>)}</select>
              {errors.templateId ? <p className="field-error">{errors.templateId}</p> : null}
            </div>
            <div className="grid grid-cols-2 gap-2">
              <div>
                <label className="label" htmlFor="dueOn">Due</label>
                <input id="dueOn" name="dueOn" type="date" className="input" defaultValue={today} />
                {errors.dueOn ? <p className="field-error">{errors.dueOn}</p> : null}
              </div>
              <div>
                <label className="label" htmlFor="one-assignee">Technician</label>
                <select id="one-assignee" name="assigneeId" className="input" defaultValue="">
                  <option value="">Nobody yet</option>
                  {loaderData.people.map((p) => <option key={p.id} value={p.id}>{p.name}</option>)}
                </select>
                {errors.assigneeId ? <p className="field-error">{errors.assigneeId}</p> : null}
              </div>
            </div>
            <button className="btn-secondary" type="submit" disabled={busy}>Plan</button>
          </Form>
        </div>
      ) : null}
    </div>
  );
}
