/**
 * uPlot charts of one combiner (client only: loaded lazily after hydration). Data are column
 * arrays from /api/v1/sites/:siteId/combiners/:combinerId/series.
 */
import UplotReact from "uplot-react";
import type uPlot from "uplot";
import "uplot/dist/uPlot.min.css";
import type { CombinerSeries } from "~/domain/combiner-series";

const W = 860;

export default function CombinerCharts({ data, name }: { data: CombinerSeries; name: string }) {
  const oiOpts: uPlot.Options = {
    title: `${name}: output index vs peers`,
    width: W,
    height: 260,
    scales: { y: { auto: true } },
    series: [
      {},
      { label: "peer 25 %", stroke: "#9cc9e8", width: 1, dash: [4, 4] },
      { label: "peer 75 %", stroke: "#9cc9e8", width: 1, dash: [4, 4] },
      { label: "peer median", stroke: "#1f5f8b", width: 2 },
      { label: name, stroke: "#d98c1f", width: 2 },
    ],
    bands: [{ series: [2, 1], fill: "rgba(156, 201, 232, 0.35)" }],
    axes: [{}, { label: "measured ÷ expected" }],
  };
  const zOpts: uPlot.Options = {
    title: "Daily modified z-score (median of valid intervals)",
    width: W,
    height: 200,
    series: [
      {},
      { label: "robust z", stroke: "#8a4b0f", width: 2, points: { show: true, size: 6 } },
      { label: "flag threshold", stroke: "#4a5a66", width: 1, dash: [6, 4], points: { show: false } },
    ],
    axes: [{}, { label: "robust z" }],
  };
  const poaOpts: uPlot.Options = {
    title: "Irradiance on the module plane",
    width: W,
    height: 160,
    series: [{}, { label: "POA W/m²", stroke: "#e0a100", width: 1.5, fill: "rgba(224, 161, 0, 0.12)" }],
    axes: [{}, { label: "W/m²" }],
  };
  const oiData = [data.t, data.q25, data.q75, data.peer, data.oi] as uPlot.AlignedData;
  const zData = [data.days.t, data.days.robustZ, data.days.t.map(() => data.days.threshold)] as uPlot.AlignedData;
  const poaData = [data.t, data.poa] as uPlot.AlignedData;
  return (
    <div className="space-y-4 overflow-x-auto" data-testid="combiner-charts">
      <UplotReact options={oiOpts} data={oiData} />
      <UplotReact options={zOpts} data={zData} />
      <UplotReact options={poaOpts} data={poaData} />
      <p className="text-sm text-muted">{data.bucketMinutes > 5 ? `Averaged over ${data.bucketMinutes}-minute buckets for this range.` : "5-minute intervals."} Daytime only; times in your browser's zone.</p>
    </div>
  );
}
