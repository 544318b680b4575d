import { NO_DATA_COLOR, OI_BINS } from "./oi-scale";

export function OiLegend() {
  return (
    <ul className="flex flex-wrap gap-x-4 gap-y-1 text-sm" aria-label="Colour legend: output relative to peers">
      {OI_BINS.map((b) => (
        <li key={b.color} className="flex items-center gap-1.5">
          <span className="inline-block h-3.5 w-5 rounded-sm border border-line" style={{ background: b.color }} aria-hidden />
          {b.label} <span className="text-muted">({b.word})</span>
        </li>
      ))}
      <li className="flex items-center gap-1.5">
        <span className="inline-block h-3.5 w-5 rounded-sm border border-line" style={{ background: NO_DATA_COLOR }} aria-hidden />
        no data
      </li>
    </ul>
  );
}
