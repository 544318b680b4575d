/**
 * Before/after chart of one repair (client only, loaded lazily): the combiner's daily output
 * relative to its peers, the repair day as a vertical line, and the before/after medians.
 */
import UplotReact from "uplot-react";
import type uPlot from "uplot";
import "uplot/dist/uPlot.min.css";

export interface RecoverySeriesData {
  repairedOn: string;
  beforeOi: number | null;
  afterOi: number | null;
  days: { day: string; r: number | null }[];
}

const DAY_S = 86400;
const t = (day: string) => Date.parse(`${day}T12:00:00Z`) / 1000;

export default function RecoveryChart({ data, title, width = 520 }: { data: RecoverySeriesData; title: string; width?: number }) {
  const xs = data.days.map((d) => t(d.day));
  const r = data.days.map((d) => (d.r == null ? null : d.r * 100));
  const repair = t(data.repairedOn);
  const before = data.days.map((d) => (d.day < data.repairedOn && data.beforeOi != null ? data.beforeOi * 100 : null));
  const after = data.days.map((d) => (d.day > data.repairedOn && data.afterOi != null ? data.afterOi * 100 : null));
  const opts: uPlot.Options = {
    title,
    width,
    height: 220,
    scales: { x: { time: true }, y: { auto: true } },
    series: [
      {},
      { label: "% of peers (daily)", stroke: "#0f5c5a", width: 2, points: { show: true, size: 5 } },
      { label: "median before", stroke: "#b3261e", width: 1.5, dash: [6, 4], points: { show: false } },
      { label: "median after", stroke: "#1d7a3e", width: 1.5, dash: [6, 4], points: { show: false } },
    ],
    axes: [{}, { label: "% of peer median", size: 60 }],
    hooks: {
      draw: [
        (u) => {
          const x = u.valToPos(repair, "x", true);
          const ctx = u.ctx;
          ctx.save();
          ctx.strokeStyle = "#e0a100";
          ctx.lineWidth = 2;
          ctx.beginPath();
          ctx.moveTo(x, u.bbox.top);
          ctx.lineTo(x, u.bbox.top + u.bbox.height);
          ctx.stroke();
          ctx.fillStyle = "#14212b";
          ctx.font = "12px sans-serif";
          ctx.fillText("repair", x + 4, u.bbox.top + 14);
          ctx.restore();
        },
      ],
    },
  };
  return <UplotReact options={opts} data={[xs, r, before, after] as uPlot.AlignedData} />;
}

export { DAY_S };
