import { Link } from "react-router";

/** An import as the progress poll and the API return it (see app/models/imports.server.ts). */
export interface ImportView {
  id: string;
  status: "uploading" | "uploaded" | "mapping" | "queued" | "running" | "done" | "failed";
  fileName: string;
  format: "long" | "wide" | null;
  sizeBytes: number | null;
  progressBytes: number;
  progress: number;
  rowsAccepted: number;
  rowsRejected: number;
  readingsLoaded: number;
  intervalSeconds: number | null;
  summary: Record<string, unknown>;
  firstErrors: { line: number; column?: string; value?: string; reason: string }[];
  hasRejectReport: boolean;
  error: string | null;
  createdAt: string;
  startedAt: string | null;
  finishedAt: string | null;
}

export const STATUS_LABEL: Record<ImportView["status"], string> = {
  uploading: "uploading",
  uploaded: "waiting for mapping",
  mapping: "waiting for mapping",
  queued: "queued",
  running: "loading",
  done: "loaded",
  failed: "failed",
};

const n = (v: unknown) => (typeof v === "number" ? v.toLocaleString("en") : "—");

function when(iso: unknown, zone: string): string {
  if (typeof iso !== "string") return "—";
  return new Intl.DateTimeFormat("en-GB", { timeZone: zone, dateStyle: "medium", timeStyle: "short" }).format(new Date(iso));
}

function interval(seconds: number | null): string {
  return seconds ? `${seconds / 60} min` : "not detected";
}

/** Progress bar while the job runs (bytes of the stored file read so far). */
export function ImportProgress({ imp }: { imp: ImportView }) {
  const pct = Math.floor(imp.progress * 100);
  const label = imp.status === "queued" ? "Waiting for the importer…" : `Loading: ${pct}% of the file read`;
  return (
    <div className="panel space-y-2" aria-live="polite">
      <h2 className="h2">Importing {imp.fileName}</h2>
      <div role="progressbar" aria-label="Import progress" aria-valuemin={0} aria-valuemax={100} aria-valuenow={pct} className="h-3 w-full overflow-hidden rounded bg-paper ring-1 ring-line">
        <div className="h-full bg-brand transition-[width]" style={{ width: `${pct}%` }} />
      </div>
      <p className="text-sm text-muted" data-testid="import-progress">{label}</p>
      <p className="text-sm text-muted">You can leave this page: the import carries on in the background and appears in the history.</p>
    </div>
  );
}

/** What arrived: devices, period, interval, gaps, accepted and rejected rows, first errors. */
export function ImportSummary({ imp, zone, reportHref }: { imp: ImportView; zone: string; reportHref: string }) {
  const s = imp.summary;
  const gaps = s.gaps as { series: number; seriesWithGaps: number; missingIntervals: number } | null | undefined;
  const failed = imp.status === "failed";
  return (
    <div className="space-y-4" data-testid="import-summary">
      {failed ? (
        <div role="alert" className="rounded-md bg-red-50 p-4 text-bad">
          <p className="font-semibold">The import failed; nothing was loaded.</p>
          <p className="mt-1" data-testid="import-error">{imp.error}</p>
        </div>
      ) : (
        <p role="status" className="rounded-md bg-green-50 p-4 text-ok">
          Loaded {n(imp.readingsLoaded)} readings from {imp.fileName}.
        </p>
      )}
      {!failed ? (
        <dl className="panel grid grid-cols-2 gap-x-6 gap-y-3 text-sm md:grid-cols-4">
          <div><dt className="text-muted">Devices</dt><dd className="text-lg font-semibold" data-testid="summary-devices">{n(s.devices)}</dd></div>
          <div><dt className="text-muted">Period</dt><dd className="font-semibold">{when(s.from, zone)} – {when(s.to, zone)}</dd></div>
          <div><dt className="text-muted">Interval</dt><dd className="text-lg font-semibold">{interval(imp.intervalSeconds)}</dd></div>
          <div>
            <dt className="text-muted">Gaps</dt>
            <dd className="font-semibold">
              {gaps ? (gaps.missingIntervals === 0 ? `none in ${n(gaps.series)} series` : `${n(gaps.missingIntervals)} missing interval${gaps.missingIntervals === 1 ? "" : "s"} in ${n(gaps.seriesWithGaps)} of ${n(gaps.series)} series`) : "—"}
            </dd>
          </div>
          <div><dt className="text-muted">Rows accepted</dt><dd className="text-lg font-semibold text-ok" data-testid="summary-accepted">{n(imp.rowsAccepted)}</dd></div>
          <div><dt className="text-muted">Rows rejected</dt><dd className={`text-lg font-semibold ${imp.rowsRejected ? "text-bad" : ""}`} data-testid="summary-rejected">{n(imp.rowsRejected)}</dd></div>
          <div><dt className="text-muted">Values rejected</dt><dd className="text-lg font-semibold">{n(s.rejectedValues)}</dd></div>
          <div><dt className="text-muted">No-data cells (empty, NaN, −9999…)</dt><dd className="text-lg font-semibold">{n(s.missingValues)}</dd></div>
        </dl>
      ) : null}
      {imp.firstErrors.length ? (
        <div className="panel space-y-2">
          <div className="flex flex-wrap items-center justify-between gap-2">
            <h2 className="h2">First problems</h2>
            {imp.hasRejectReport ? <Link className="btn-secondary" to={reportHref} reloadDocument>Download the reject report (CSV)</Link> : null}
          </div>
          <table className="table">
            <thead><tr><th>Line</th><th>Column</th><th>Value</th><th>Reason</th></tr></thead>
            <tbody>
              {imp.firstErrors.map((e, i) => (
                <tr key={i}><td>{e.line}</td><td>{e.column ?? ""}</td><td className="font-mono">{e.value ?? ""}</td><td>{e.reason}</td></tr>
              ))}
            </tbody>
          </table>
        </div>
      ) : null}
    </div>
  );
}
