import { data, Form, Link, useNavigation } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/site-work-order";
import { forbidden, notFound, requireSite } from "~/services/session.server";
import { addPhotos, assignableUsers, transitionWorkOrder, workOrderDetail } from "~/models/work-orders.server";
import { drawingStrings } from "~/models/layout.server";
import { RESOLUTIONS, WORK_ORDER_STATES, recoveries } from "~/db/schema";
import { db } from "~/db/client.server";
import { eq } from "drizzle-orm";
import { actorsFor, allowedTransitions, dueStatus, formatNumber, localDay } from "~/domain/work-orders";
import { photoUrl, storePhotos } from "~/services/photos.server";
import { PlantDrawing } from "~/components/plant-drawing";
import { SafetyBlock } from "~/components/safety-block";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data ? formatNumber(data.wo.number) : "Work order"} · Sunsift` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site, principal } = await requireSite(request, params.siteId, "workorders:view");
  const d = await workOrderDetail(site.id, params.workOrderId);
  if (!d) notFound("No such work order");
  const actors = actorsFor(principal, d.wo);
  const [strings, people, [rec]] = await Promise.all([
    d.combiner ? drawingStrings(site.id) : Promise.resolve([]),
    actors.includes("manager") ? assignableUsers(principal.orgId) : Promise.resolve([]),
    db().select().from(recoveries).where(eq(recoveries.workOrderId, d.wo.id)).limit(1),
  ]);
  const names: Record<number, string> = {};
  if (d.combiner) names[d.combiner.id] = d.combiner.name;
  const photos = d.wo.photos.map((key) => ({ key, url: photoUrl(key) }));
  return {
    site: { id: site.id, name: site.name },
    today: localDay(new Date(), site.timezone),
    wo: { ...d.wo, photos: undefined },
    photos,
    combiner: d.combiner,
    inverter: d.inverter,
    block: d.block,
    assignee: d.assignee,
    flag: d.flag,
    events: d.events,
    recovery: rec ?? null,
    transitions: allowedTransitions(d.wo.state, actors).map((t) => ({ to: t.to, action: t.action, label: t.label })),
    people: people.map((p) => ({ id: p.id, name: p.name })),
    strings: strings,
    names,
  };
}

const closeSchema = z.object({
  resolution: z.enum(RESOLUTIONS, { error: "Choose what you found" }),
  workDone: z.string().trim().min(3, "Say what you did (a few words are enough)").max(4000),
  minutesSpent: z.coerce.number({ error: "Minutes must be a number" }).int("Whole minutes").min(1, "At least 1 minute").max(7 * 24 * 60, "More than a week: check the number"),
  repairedOn: z.string().regex(/^\d{4}-\d{2}-\d{2}$/, "Give the day of the repair"),
});

export async function action({ request, params }: Route.ActionArgs) {
  const { site, principal } = await requireSite(request, params.siteId, "workorders:view");
  if (!principal.roles.some((r) => r === "admin" || r === "lead" || r === "technician")) forbidden();
  const d = await workOrderDetail(site.id, params.workOrderId);
  if (!d) notFound("No such work order");
  const form = await request.formData();
  const intent = String(form.get("intent") ?? "");
  const actor = { orgId: principal.orgId, userId: principal.userId, roles: principal.roles };
  if (intent === "photos") {
    if (!actorsFor(principal, d.wo).length) forbidden("Only the assignee or a lead can add photos.");
    const stored = await storePhotos(`sites/${site.id}/work-orders/${d.wo.id}`, form.getAll("photos").filter((f): f is File => f instanceof File));
    if (stored.error) return data({ errors: { photos: stored.error } as Record<string, string> }, { status: 400 });
    await addPhotos(site.id, d.wo.id, stored.keys);
    return { errors: {} as Record<string, string>, ok: `${stored.keys.length} photo${stored.keys.length === 1 ? "" : "s"} added.` };
  }
  if (intent === "assign") {
    const r = await transitionWorkOrder(actor, site.id, d.wo.id, "assigned", { assigneeId: String(form.get("assigneeId") ?? "") || null });
    if (!r.ok) return data({ errors: { [r.field ?? "form"]: r.error } as Record<string, string> }, { status: r.field ? 400 : 403 });
    return { errors: {} as Record<string, string>, ok: "Assigned; the technician was e-mailed." };
  }
  if (intent === "close") {
    const parsed = closeSchema.safeParse(Object.fromEntries(["resolution", "workDone", "minutesSpent", "repairedOn"].map((k) => [k, form.get(k) ?? undefined])));
    if (!parsed.success) {
      const errors: Record<string, string> = {};
      for (const i of parsed.error.issues) errors[String(i.path[0])] ??= i.message;
      return data({ errors }, { status: 400 });
    }
    const today = localDay(new Date(), site.timezone);
    if (parsed.data.repairedOn > today) return data({ errors: { repairedOn: "The repair day cannot be in the future." } as Record<string, string> }, { status: 400 });
    if (!actorsFor(principal, d.wo).length) forbidden("Only the assignee or a lead can close this work order.");
    const stored = await storePhotos(`sites/${site.id}/work-orders/${d.wo.id}`, form.getAll("photos").filter((f): f is File => f instanceof File));
    if (stored.error) return data({ errors: { photos: stored.error } as Record<string, string> }, { status: 400 });
    const r = await transitionWorkOrder(actor, site.id, d.wo.id, "done", { closeOut: { ...parsed.data, photos: stored.keys } });
    if (!r.ok) return data({ errors: { form: r.error } as Record<string, string> }, { status: 403 });
    return { errors: {} as Record<string, string>, ok: "Closed. Sunsift will compare the combiner's output before and after the repair." };
  }
  if (intent === "move") {
    const to = String(form.get("to") ?? "");
    if (!(WORK_ORDER_STATES as readonly string[]).includes(to)) return data({ errors: { form: "Unknown state" } as Record<string, string> }, { status: 400 });
    const r = await transitionWorkOrder(actor, site.id, d.wo.id, to as (typeof WORK_ORDER_STATES)[number], { note: String(form.get("note") ?? "") || null });
    if (!r.ok) return data({ errors: { form: r.error } as Record<string, string> }, { status: 403 });
    return { errors: {} as Record<string, string>, ok: `Now ${to}.` };
  }
  return data({ errors: { form: "Unknown request" } as Record<string, string> }, { status: 400 });
}

export default function Screen({ loaderData, actionData }: Route.ComponentProps) {
  const { site, wo, combiner, transitions, today } = loaderData;
  const nav = useNavigation();
  const busy = nav.state !== "idle";
  const errors: Record<string, string> = actionData?.errors ?? {};
  const canClose = transitions.some((t) => t.action === "close");
  const moves = transitions.filter((t) => t.action !== "close" && t.action !== "assign");
  const due = dueStatus(wo.dueOn, today, wo.state);
  const where = combiner ? `${combiner.name}${wo.stringNumbers.length ? ` · string ${wo.stringNumbers.join(", ")}` : ""}` : loaderData.block ? `Block ${loaderData.block}` : "Site";
  return (
    <div className="mx-auto max-w-5xl space-y-4">
      <p className="text-sm"><Link className="text-brand underline" to={`/sites/${site.id}/work-orders`}>← Work orders</Link></p>
      <div>
        <p className="text-sm font-medium text-muted">{formatNumber(wo.number)} · {site.name}</p>
        <h1 className="h1">{wo.title}</h1>
        <p className="mt-1 flex flex-wrap gap-x-4 gap-y-1">
          <span className="rounded bg-brand px-2 py-0.5 text-sm font-medium text-white" data-testid="wo-state">{wo.state}</span>
          <span>Priority <strong>{wo.priority}</strong></span>
          {wo.dueOn ? <span className={due === "overdue" ? "font-semibold text-bad" : due === "due soon" ? "font-semibold text-warn" : ""}>{due === "overdue" ? "Overdue: was due" : "Due"} {wo.dueOn}</span> : null}
          <span>Assignee <strong>{loaderData.assignee?.name ?? "nobody yet"}</strong></span>
        </p>
      </div>
      {actionData && "ok" in actionData && actionData.ok ? <p className="rounded-md border border-ok bg-green-50 p-3 text-ok" role="status">{actionData.ok}</p> : null}
      {errors.form ? <p className="field-error" role="alert">{errors.form}</p> : null}

      <SafetyBlock compact />

      <div className="grid gap-4 lg:grid-cols-2">
        <section className="panel space-y-2">
          <h2 className="h2">Where and what</h2>
          <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-1">
            <dt className="text-muted">Place</dt><dd className="font-semibold" data-testid="wo-where">{where}</dd>
            {loaderData.inverter ? <><dt className="text-muted">Inverter</dt><dd>{loaderData.inverter}</dd></> : null}
            {loaderData.block ? <><dt className="text-muted">Block</dt><dd>{loaderData.block}</dd></> : null}
          </dl>
          <p className="font-medium">What to check</p>
          <p className="whitespace-pre-wrap" data-testid="wo-what">{wo.whatToCheck}</p>
          {loaderData.flag ? (
            <p className="text-sm text-muted">From a flag raised {loaderData.flag.firstDay}: about {loaderData.flag.stringsOut} string{loaderData.flag.stringsOut === 1 ? "" : "s"} out, {loaderData.flag.lostKwhPerDay.toFixed(1)} kWh/day lost; the flag is now <strong>{loaderData.flag.state}</strong>.</p>
          ) : null}
        </section>
        {combiner && loaderData.strings.length ? (
          <PlantDrawing
            strings={loaderData.strings}
            combinerNames={loaderData.names}
            fillOf={(id) => (id === combiner.id ? "#0f5c5a" : "#c9d3da")}
            highlight={{ combinerId: combiner.id, stringNumber: wo.stringNumbers[0] }}
            title={`Plant drawing with ${where} outlined`}
            height={300}
          />
        ) : (
          <div className="panel text-muted">No drawing: {combiner ? "the layout has no string positions." : "this work order is not on one combiner."}</div>
        )}
      </div>

      {loaderData.transitions.length ? (
        <section className="panel space-y-3">
          <h2 className="h2">Next step</h2>
          {transitions.some((t) => t.action === "assign") ? (
            <Form method="post" className="flex flex-wrap items-end gap-2">
              <input type="hidden" name="intent" value="assign" />
              <div>
                <label className="label" htmlFor="assigneeId">Assign to</label>
                <select id="assigneeId" name="assigneeId" className="input" defaultValue="">
                  <option value="" disabled>Choose a person</option>
                  {loaderData.people.map((p) => <option key={p.id} value={p.id}>{p.name}</option>)}
                </select>
                {errors.assignee ? <p className="field-error">{errors.assignee}</p> : null}
              </div>
              <button className="btn" type="submit" disabled={busy}>Assign</button>
            </Form>
          ) : null}
          <div className="flex flex-wrap gap-2">
            {moves.map((t) => (
              <Form method="post" key={t.to}>
                <input type="hidden" name="intent" value="move" />
                <input type="hidden" name="to" value={t.to} />
                <button className={t.action === "start" ? "btn px-6 py-3 text-lg" : t.action === "cancel" ? "btn-secondary text-bad" : "btn-secondary"} type="submit" disabled={busy}>{t.label}</button>
              </Form>
            ))}
          </div>
        </section>
      ) : null}

      {canClose ? (
        <section className="panel space-y-3" aria-labelledby="close-title">
          <h2 className="h2" id="close-title">Close out</h2>
          <Form method="post" encType="multipart/form-data" className="space-y-4">
            <input type="hidden" name="intent" value="close" />
            <fieldset>
              <legend className="label">What did you find?</legend>
              <div className="grid grid-cols-1 gap-2 sm:grid-cols-3">
                {RESOLUTIONS.map((r) => (
                  <label key={r} className="flex cursor-pointer items-center gap-3 rounded-md border border-line p-3 has-[:checked]:border-brand has-[:checked]:bg-paper">
                    <input type="radio" name="resolution" value={r} className="h-5 w-5" />
                    <span className="capitalize">{r}</span>
                  </label>
                ))}
              </div>
              {errors.resolution ? <p className="field-error">{errors.resolution}</p> : null}
            </fieldset>
            <div>
              <label className="label" htmlFor="workDone">What did you do?</label>
              <textarea id="workDone" name="workDone" rows={3} className="input" placeholder="e.g. replaced the 15 A fuse, checked the other fuses of the combiner" />
              {errors.workDone ? <p className="field-error">{errors.workDone}</p> : null}
            </div>
            <div className="grid grid-cols-2 gap-3">
              <div>
                <label className="label" htmlFor="minutesSpent">Time spent (minutes)</label>
                <input id="minutesSpent" name="minutesSpent" type="number" inputMode="numeric" min={1} className="input" />
                {errors.minutesSpent ? <p className="field-error">{errors.minutesSpent}</p> : null}
              </div>
              <div>
                <label className="label" htmlFor="repairedOn">Repaired on</label>
                <input id="repairedOn" name="repairedOn" type="date" max={today} defaultValue={today} className="input" />
                {errors.repairedOn ? <p className="field-error">{errors.repairedOn}</p> : null}
              </div>
            </div>
            <div>
              <label className="label" htmlFor="photos">Photos (optional)</label>
              <input id="photos" name="photos" type="file" accept="image/*" capture="environment" multiple className="input" />
              {errors.photos ? <p className="field-error">{errors.photos}</p> : null}
            </div>
            <button className="btn w-full justify-center py-3 text-lg sm:w-auto" type="submit" disabled={busy}>{busy ? "Saving…" : "Close as done"}</button>
          </Form>
        </section>
      ) : null}

      {wo.state === "done" ? (
        <section className="panel space-y-2">
          <h2 className="h2">Close-out</h2>
          <p>Found: <strong data-testid="wo-resolution">{wo.resolution}</strong> · repaired on {wo.repairedOn} · {wo.minutesSpent} min</p>
          <p className="whitespace-pre-wrap">{wo.workDone}</p>
          {loaderData.recovery ? (
            <p className={loaderData.recovery.status === "recovered" ? "text-ok" : loaderData.recovery.status === "not recovered" ? "text-bad" : "text-muted"} data-testid="wo-recovery">
              <strong>Recovery check:</strong> {loaderData.recovery.message}
            </p>
          ) : null}
        </section>
      ) : null}

      {loaderData.photos.length || (wo.state !== "cancelled" && transitions.length) ? (
        <section className="panel space-y-3">
          <h2 className="h2">Photos</h2>
          {loaderData.photos.length ? (
            <ul className="grid grid-cols-2 gap-2 sm:grid-cols-4">
              {loaderData.photos.map((p) => (
                <li key={p.key}><img src={p.url} alt={`Photo ${p.key.split("/").pop()}`} className="aspect-square w-full rounded object-cover" loading="lazy" /></li>
              ))}
            </ul>
          ) : <p className="text-muted">No photos yet.</p>}
          {!canClose && transitions.length ? (
            <Form method="post" encType="multipart/form-data" className="flex flex-wrap items-end gap-2">
              <input type="hidden" name="intent" value="photos" />
              <input name="photos" type="file" accept="image/*" multiple className="input max-w-xs" aria-label="Add photos" />
              <button className="btn-secondary" type="submit" disabled={busy}>Add photos</button>
              {errors.photos ? <p className="field-error">{errors.photos}</p> : null}
            </Form>
          ) : null}
        </section>
      ) : null}

      <section className="panel">
        <h2 className="h2">History</h2>
        <ol className="mt-2 space-y-1 text-sm">
          {loaderData.events.map((e) => (
            <li key={e.id}>
              <span className="text-muted">{new Date(e.at).toISOString().slice(0, 16).replace("T", " ")} UTC</span> · {e.fromState ? `${e.fromState} → ` : ""}<strong>{e.toState}</strong>
              {e.who ? ` by ${e.who}` : ""}{e.note ? ` — ${e.note}` : ""}
            </li>
          ))}
        </ol>
      </section>
    </div>
  );
}
