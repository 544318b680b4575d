import { useState } from "react";
import { headingRanges, type TimelineDay } from "~/domain/flight-timeline";

export interface TimelineRowView {
  local: string;
  elevation: number;
  azimuth: number;
  poa: number;
  irOk: boolean;
  morning: boolean;
  glare: string[];
  bestHeading: number | null;
}

export interface TimelineDayView {
  day: string;
  label: string;
  solarNoonLocal: string | null;
  /** Highest clear-sky POA of the day, W/m² */
  peakPoa: number;
  windows: { start: string; end: string; peakPoa: number; morning: boolean }[];
  rows: TimelineRowView[];
}

function cellClass(r: TimelineRowView): string {
  if (r.elevation <= 0) return "bg-slate-700";
  if (!r.irOk) return "bg-slate-300";
  return r.morning ? "bg-emerald-700" : "bg-emerald-500";
}

/** One bar per day, one cell per 15 minutes; pick a day to read its rows. */
export function FlightTimeline({ days, minPoa }: { days: TimelineDayView[]; minPoa: number }) {
  const [open, setOpen] = useState<string | null>(days[0]?.day ?? null);
  return (
    <div className="space-y-3">
      <p className="flex flex-wrap gap-4 text-sm">
        <span><span className="mr-1 inline-block h-3 w-5 bg-emerald-700 align-middle" /> IR minimum met, cooler morning (best for cell-level defects)</span>
        <span><span className="mr-1 inline-block h-3 w-5 bg-emerald-500 align-middle" /> IR minimum met, afternoon (whole-string faults)</span>
        <span><span className="mr-1 inline-block h-3 w-5 bg-slate-300 align-middle" /> below {minPoa} W/m²</span>
        <span><span className="mr-1 inline-block h-3 w-5 bg-slate-700 align-middle" /> night</span>
      </p>
      <ul className="space-y-2" data-testid="flight-windows">
        {days.map((d) => (
          <li key={d.day}>
            <button type="button" className="w-full text-left" onClick={() => setOpen(open === d.day ? null : d.day)} aria-expanded={open === d.day}>
              <span className="flex flex-wrap items-baseline gap-x-3">
                <span className="w-32 text-lg font-semibold">{d.label}</span>
                <span className="text-base">
                  {d.windows.length ? d.windows.map((w) => `${w.start}–${w.end}${w.morning ? " (morning)" : ""}`).join(" · ") : `no window: clear-sky POA peaks at ${Math.round(d.peakPoa)} W/m², below ${minPoa}`}
                </span>
              </span>
              <span className="mt-1 flex h-6 w-full overflow-hidden rounded" aria-hidden="true">
                {d.rows.map((r) => <span key={r.local} className={`h-full flex-1 ${cellClass(r)} ${r.local.endsWith(":00") ? "border-l border-white/40" : ""}`} title={`${r.local} · POA ${Math.round(r.poa)} W/m²`} />)}
              </span>
            </button>
            {open === d.day ? (
              <div className="mt-2 max-h-96 overflow-auto">
                <table className="table" data-testid="timeline-rows">
                  <thead><tr><th>Time</th><th>Sun elevation</th><th>Sun azimuth</th><th>Clear-sky POA</th><th>IR minimum</th><th>Camera headings to avoid (glare)</th><th>Best heading</th></tr></thead>
                  <tbody>
                    {d.rows.filter((r) => r.elevation > 0).map((r) => (
                      <tr key={r.local} className={r.irOk ? "" : "text-muted"}>
                        <td className="font-medium">{r.local}{r.local === d.solarNoonLocal ? " (solar noon)" : ""}</td>
                        <td>{r.elevation.toFixed(1)}°</td>
                        <td>{r.azimuth.toFixed(0)}°</td>
                        <td>{Math.round(r.poa)} W/m²</td>
                        <td>{r.irOk ? "met" : "not met"}</td>
                        <td>{r.glare.length ? r.glare.join(", ") : "none"}</td>
                        <td>{r.bestHeading != null ? `${r.bestHeading}°` : "—"}</td>
                      </tr>
                    ))}
                  </tbody>
                </table>
              </div>
            ) : null}
          </li>
        ))}
      </ul>
    </div>
  );
}

/** Serialisable rows for the screen and the brief. */
export function timelineView(days: TimelineDay[]): TimelineDayView[] {
  return days.map((d) => ({
    day: d.day,
    label: new Date(`${d.day}T12:00:00Z`).toLocaleDateString("en-GB", { weekday: "short", day: "numeric", month: "short", timeZone: "UTC" }),
    solarNoonLocal: d.solarNoonLocal,
    peakPoa: d.rows.reduce((m, r) => Math.max(m, r.poa), 0),
    windows: d.windows,
    rows: d.rows.map((r) => ({ local: r.local, elevation: r.elevation, azimuth: r.azimuth, poa: r.poa, irOk: r.irOk, morning: r.morning, glare: headingRanges(r.glareHeadings), bestHeading: r.bestHeading })),
  }));
}

