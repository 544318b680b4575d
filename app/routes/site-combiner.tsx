import { lazy, Suspense, useEffect, useState } from "react";
import { Link } from "react-router";
import { useQuery } from "@tanstack/react-query";
import type { Route } from "./+types/site-combiner";
import { requireSite } from "~/services/session.server";
import { combinerDetail, explainFlag } from "~/models/analysis-views.server";
import { EmptyState } from "~/components/empty-state";
import type { CombinerSeries } from "~/domain/combiner-series";
import { LOSS_CLASS_LABEL, type LossClass } from "~/domain/flags";
import { CONFIDENCE_HINT } from "~/domain/strings-out";

const CombinerCharts = lazy(() => import("~/components/charts/combiner-charts"));

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.detail?.combiner.name ?? "Combiner"} · Sunsift` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireSite(request, params.siteId, "flags:view");
  const id = Number(params.combinerId);
  const detail = Number.isInteger(id) && id > 0 && id < 2 ** 31 ? await combinerDetail(site, id) : null;
  const sentence = detail ? explainFlag(detail.openFlag, detail.combiner.stringCount, detail.days[0] ?? null) : null;
  return { site: { id: site.id, name: site.name, currency: site.settings.currency, tariff: site.settings.tariffPerMwh }, detail, sentence };
}

const pct = (x: number | null) => (x == null ? "—" : `${(x * 100).toFixed(1)} %`);
const num = (x: number | null, d = 1) => (x == null ? "—" : x.toFixed(d));
/** Energy lost against the peer median: a day above the peers lost nothing (it is said so, not shown as a negative loss). */
function lostCell(kwh: number | null) {
  if (kwh == null) return "—";
  if (kwh > -0.5) return Math.max(0, kwh).toFixed(0);
  return <span className="text-muted" title={`${Math.round(-kwh)} kWh more than its peers' median`}>0 · above peers</span>;
}

function ChartsPanel({ siteId, combinerId, name }: { siteId: string; combinerId: number; name: string }) {
  const [days, setDays] = useState(30);
  const [mounted, setMounted] = useState(false);
  useEffect(() => setMounted(true), []);
  const q = useQuery({
    queryKey: ["combiner-series", siteId, combinerId, days],
    enabled: mounted,
    queryFn: async (): Promise<CombinerSeries> => {
      const r = await fetch(`/api/v1/sites/${siteId}/combiners/${combinerId}/series?days=${days}`);
      if (!r.ok) throw new Error(`The chart data did not load (${r.status})`);
      return r.json();
    },
  });
  return (
    <section className="panel space-y-3" aria-labelledby="charts-h">
      <div className="flex flex-wrap items-center justify-between gap-2">
        <h2 id="charts-h" className="h2">Against its peers</h2>
        <div role="group" aria-label="Period" className="flex gap-1">
          {[7, 30, 60].map((d) => (
            <button key={d} type="button" className={d === days ? "btn" : "btn-secondary"} aria-pressed={d === days} onClick={() => setDays(d)}>
              {d} days
            </button>
          ))}
        </div>
      </div>
      {q.isError ? (
        <p role="alert" className="text-bad">{(q.error as Error).message}</p>
      ) : !q.data ? (
        <p className="text-muted" role="status">Loading charts…</p>
      ) : q.data.t.length === 0 ? (
        <EmptyState title="No analysed data yet">Run the analysis after importing production data.</EmptyState>
      ) : (
        <Suspense fallback={<p className="text-muted" role="status">Loading charts…</p>}>
          <CombinerCharts data={q.data} name={name} />
        </Suspense>
      )}
    </section>
  );
}

export default function Screen({ loaderData }: Route.ComponentProps) {
  const { site, detail, sentence } = loaderData;
  if (!detail)
    return (
      <div className="space-y-4">
        <h1 className="h1">Combiner</h1>
        <EmptyState title="No such combiner on this site">It may have been removed by a new layout import. <Link className="underline" to={`/sites/${site.id}/flags`}>Back to the flags</Link>.</EmptyState>
      </div>
    );
  const { combiner, strings, days, openFlag, history } = detail;
  return (
    <div className="space-y-4">
      <p className="text-sm"><Link className="underline" to={`/sites/${site.id}/flags`}>Flags</Link> / {combiner.name}</p>
      <h1 className="h1">
        {combiner.name} <span className="text-muted">· block {combiner.block ?? "—"} · inverter {combiner.inverter ?? "—"} · {combiner.stringCount ?? "?"} strings</span>
      </h1>
      <p className="panel text-lg" data-testid="combiner-sentence">{sentence}</p>
      {openFlag ? (
        <dl className="grid grid-cols-2 gap-3 sm:grid-cols-5">
          <div className="panel"><dt className="text-sm text-muted">Strings out</dt><dd className="text-xl font-semibold">{openFlag.stringsOut}</dd></div>
          <div className="panel" title={CONFIDENCE_HINT}>
            <dt className="text-sm text-muted">Confidence</dt>
            <dd className="text-xl font-semibold">{Math.round(openFlag.confidence * 100)} %</dd>
            <dd className="text-xs text-muted" data-testid="confidence-hint">how close the shortfall is to a whole number of strings</dd>
          </div>
          <div className="panel"><dt className="text-sm text-muted">Energy lost</dt><dd className="text-xl font-semibold">{Math.round(openFlag.lostKwhPerDay)} kWh/day</dd></div>
          <div className="panel"><dt className="text-sm text-muted">Money lost</dt><dd className="text-xl font-semibold">{((openFlag.lostKwhPerDay / 1000) * site.tariff).toFixed(2)} {site.currency}/day</dd></div>
          <div className="panel"><dt className="text-sm text-muted">State</dt><dd className="text-xl font-semibold">{openFlag.state}</dd></div>
        </dl>
      ) : null}
      <ChartsPanel siteId={site.id} combinerId={combiner.id} name={combiner.name} />
      <div className="grid gap-4 lg:grid-cols-2">
        <section className="panel" aria-labelledby="days-h">
          <h2 id="days-h" className="h2 mb-2">Daily results</h2>
          {days.length === 0 ? (
            <p className="text-muted">No analysed days yet.</p>
          ) : (
            <div className="max-h-96 overflow-y-auto">
              <table className="table">
                <thead><tr><th>Day</th><th>Output vs peers</th><th>Robust z</th><th>Strings deficit</th><th>Lost kWh</th><th>Valid intervals</th><th>Note</th></tr></thead>
                <tbody>
                  {days.map((d) => (
                    <tr key={d.day}>
                      <td>{d.day}</td>
                      <td>{d.outputIndex != null && d.peerMedianOi ? pct(d.outputIndex / d.peerMedianOi) : "—"}</td>
                      <td>{num(d.robustZ)}</td>
                      <td>{d.stringsOut == null ? "—" : Math.max(0, d.stringsOut).toFixed(2)}</td>
                      <td>{lostCell(d.lostKwh)}</td>
                      <td>{d.validIntervals} / {d.totalIntervals}</td>
                      <td className="text-muted">{d.lossClass && d.lossClass !== "none" && d.lossClass !== "strings_out" ? LOSS_CLASS_LABEL[d.lossClass as LossClass] : ""}</td>
                    </tr>
                  ))}
                </tbody>
              </table>
            </div>
          )}
        </section>
        <div className="space-y-4">
          <section className="panel" aria-labelledby="strings-h">
            <h2 id="strings-h" className="h2 mb-2">Strings</h2>
            {strings.length === 0 ? <p className="text-muted">No strings in the layout.</p> : (
              <ul className="flex flex-wrap gap-2">
                {strings.map((s) => <li key={s.number} className="rounded border border-line px-2 py-1 text-sm">#{s.number} · {s.modules} modules</li>)}
              </ul>
            )}
            <p className="mt-2 text-sm text-muted">Combiner data cannot say which string is out: a drone flight or a check at the combiner box tells.</p>
          </section>
          <section className="panel" aria-labelledby="hist-h">
            <h2 id="hist-h" className="h2 mb-2">Flag history</h2>
            {history.length === 0 ? <p className="text-muted">No flag has been raised on this combiner.</p> : (
              <ol className="space-y-1 text-sm">
                {history.map((h) => (
                  <li key={h.id}>{new Date(h.at).toISOString().slice(0, 16).replace("T", " ")} UTC — {h.fromState ? `${h.fromState} → ` : ""}<strong>{h.toState}</strong>{h.reason ? `: ${h.reason}` : ""}</li>
                ))}
              </ol>
            )}
          </section>
        </div>
      </div>
    </div>
  );
}
