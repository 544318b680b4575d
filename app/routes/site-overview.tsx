import { Form, Link, useNavigate, useNavigation, useRevalidator } from "react-router";
import { useEffect } from "react";
import type { Route } from "./+types/site-overview";
import { requireSite } from "~/services/session.server";
import { EmptyState } from "~/components/empty-state";
import { PlantDrawing } from "~/components/plant-drawing";
import { OiLegend } from "~/components/charts/oi-legend";
import { oiColor, oiWord } from "~/components/charts/oi-scale";
import { siteOverviewCached } from "~/models/overview-cache.server";
import { usePlant } from "~/components/plant-positions";
import { queueAnalysis } from "~/jobs/analysis.server";
import { can } from "~/permissions";

export const meta: Route.MetaFunction = () => [{ title: "Site overview · Sunsift" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site, principal } = await requireSite(request, params.siteId, "site:view");
  // Cached until the next analysis run or flag change (see change-feed.server.ts).
  // The per-combiner outputs reach the drawing through plant.json, not this page's data.
  const { combiners: _drawn, ...overview } = await siteOverviewCached(site);
  return {
    site: { id: site.id, name: site.name, currency: site.settings.currency },
    overview,
    canRun: can(principal.roles, "analysis:run"),
    canFlags: can(principal.roles, "flags:view"),
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { site } = await requireSite(request, params.siteId, "analysis:run");
  const { runId } = await queueAnalysis({ siteId: site.id, trigger: "manual" });
  return { queued: runId };
}

const money = (x: number, cur: string) => `${x.toLocaleString("en-GB", { maximumFractionDigits: x < 100 ? 2 : 0 })} ${cur}`;

export default function Screen({ loaderData, actionData }: Route.ComponentProps) {
  const { site, overview: o, canRun, canFlags } = loaderData;
  const plant = usePlant(site.id);
  const strings = plant.data?.strings ?? [];
  const byId = plant.data?.outputs ?? new Map<number, { ratio: number | null; stringsOut: number | null }>();
  const names = plant.data?.names ?? {};
  const nav = useNavigation();
  const revalidator = useRevalidator();
  const navigate = useNavigate();
  const running = o.lastRun && (o.lastRun.status === "queued" || o.lastRun.status === "running");
  // While a run is queued or running, refresh every few seconds so the result appears by itself.
  useEffect(() => {
    if (!running && !actionData?.queued) return;
    const t = setInterval(() => revalidator.revalidate(), 3000);
    return () => clearInterval(t);
  }, [running, actionData?.queued, revalidator]);
  const openFlags = Object.entries(o.flagsByState).reduce((n, [s, v]) => (s === "dismissed" ? n : n + v), 0);
  return (
    <div className="space-y-4">
      <div className="flex flex-wrap items-end justify-between gap-3">
        <h1 className="h1">Site overview <span className="text-muted">· {site.name}</span></h1>
        {canRun ? (
          <Form method="post" className="flex items-center gap-3">
            <p className="text-sm text-muted" role="status">
              {o.lastRun ? `Last analysis: ${o.lastRun.status}${o.lastRun.finishedAt ? ` ${new Date(o.lastRun.finishedAt).toISOString().slice(0, 16).replace("T", " ")} UTC` : ""}` : "Not analysed yet"}
              {o.lastRun?.status === "failed" && o.lastRun.error ? ` — ${o.lastRun.error}` : ""}
            </p>
            <button className="btn" type="submit" disabled={nav.state !== "idle" || !!running}>{running ? "Analysing…" : "Run analysis now"}</button>
          </Form>
        ) : null}
      </div>
      {!o.lastDay ? (
        <EmptyState title="No analysis yet">Once the layout and production data are imported and analysed, this page shows open loss, flags and the plant map coloured by output.</EmptyState>
      ) : (
        <>
          <dl className="grid grid-cols-2 gap-3 lg:grid-cols-5">
            <div className="panel"><dt className="text-sm text-muted">Open loss</dt><dd className="text-2xl font-semibold" data-testid="open-loss">{Math.round(o.openLossKwhPerDay).toLocaleString("en-GB")} kWh/day</dd></div>
            <div className="panel"><dt className="text-sm text-muted">Money lost</dt><dd className="text-2xl font-semibold">{money(o.openLossMoneyPerDay, site.currency)}/day</dd></div>
            <div className="panel">
              <dt className="text-sm text-muted">Open flags</dt>
              <dd className="text-2xl font-semibold">{canFlags ? <Link className="underline" to={`/sites/${site.id}/flags`}>{openFlags}</Link> : openFlags}</dd>
              <dd className="text-xs text-muted">{Object.entries(o.flagsByState).map(([k, v]) => `${v} ${k}`).join(" · ") || "none"}</dd>
            </div>
            <div className="panel">
              <dt className="text-sm text-muted">Performance ratio, last 7 days</dt>
              <dd className="text-2xl font-semibold">{o.pr7?.pr != null ? `${(o.pr7.pr * 100).toFixed(1)} %` : "—"}</dd>
              <dd className="text-xs text-muted">{o.pr7 ? `${o.pr7.fromDay} – ${o.pr7.toDay}, final yield ÷ reference yield (IEC 61724-1): AC energy ÷ DC rating, over plane-of-array insolation ÷ 1 kW/m²` : ""}</dd>
            </div>
            <div className="panel">
              <dt className="text-sm text-muted">Data coverage, last 7 days</dt>
              <dd className="text-2xl font-semibold">{o.coverage7 != null ? `${(o.coverage7 * 100).toFixed(1)} %` : "—"}</dd>
              <dd className="text-xs text-muted">combiner readings present in daylight</dd>
            </div>
          </dl>
          {o.notStrings.length ? (
            <section className="panel space-y-1" aria-labelledby="not-strings-h">
              <h2 id="not-strings-h" className="h2">Low, but not strings out</h2>
              <ul className="list-disc pl-5">{o.notStrings.map((n) => <li key={n.kind}>{n.text}</li>)}</ul>
            </section>
          ) : null}
          {o.audit && (o.audit.changes.length || (o.audit.constantShiftMin != null && Math.abs(o.audit.constantShiftMin) >= 10)) ? (
            <section className="panel border-warn" aria-labelledby="ts-h">
              <h2 id="ts-h" className="h2">Timestamps do not match the sun</h2>
              <p>Proposed correction: {o.audit.proposal}.</p>
              <p className="text-sm text-muted">Compared the solar noon seen in the irradiance data with the computed one, day by day. Re-import the affected files with the corrected time zone or offset; results on the affected days are unreliable until then.</p>
            </section>
          ) : o.audit ? (
            <p className="text-sm text-muted">Timestamp check: {o.audit.proposal} (median shift {o.audit.constantShiftMin != null ? Math.round(o.audit.constantShiftMin) || 0 : "—"} min).</p>
          ) : null}
          <section className="panel space-y-3" aria-labelledby="map-h">
            <h2 id="map-h" className="h2">Plant map — output relative to peers on {o.lastDay}</h2>
            <OiLegend />
            {plant.isPending ? (
              <p className="text-muted" role="status">Loading the plant drawing…</p>
            ) : plant.isError ? (
              <p className="text-bad" role="alert">{plant.error.message} Reload the page to try again.</p>
            ) : strings.length ? (
              <PlantDrawing
                title={`${site.name}: combiners coloured by output relative to their peers`}
                strings={strings}
                combinerNames={names}
                fillOf={(id) => oiColor(byId.get(id)?.ratio)}
                onSelectCombiner={canFlags ? (id) => navigate(`/sites/${site.id}/combiners/${id}`) : undefined}
                describe={(id) => {
                  const c = byId.get(id);
                  if (!c || c.ratio == null) return "no data";
                  return `${(c.ratio * 100).toFixed(1)} % of peers (${oiWord(c.ratio)})${c.stringsOut != null && c.stringsOut >= 0.5 ? `, ~${c.stringsOut.toFixed(1)} strings short` : ""}`;
                }}
              />
            ) : (
              <p className="text-muted">The layout has no string positions to draw.</p>
            )}
          </section>
        </>
      )}
    </div>
  );
}
