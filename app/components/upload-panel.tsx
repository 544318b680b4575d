import { useEffect, useRef, useState } from "react";
import { useFetcher } from "react-router";

type SignResult = { ok: true; importId: string; url: string } | { ok: false; error: string };
type DoneResult = { ok: true; importId: string } | { ok: false; error: string };

function size(n: number): string {
  if (n >= 1024 ** 3) return `${(n / 1024 ** 3).toFixed(1)} GB`;
  if (n >= 1024 ** 2) return `${(n / 1024 ** 2).toFixed(1)} MB`;
  return `${Math.max(1, Math.round(n / 1024))} KB`;
}

/**
 * Sends a CSV straight from the browser to object storage with a presigned PUT (the server only
 * signs), showing real upload progress, then opens the mapping step.
 */
export function UploadPanel({ siteId, maxBytes }: { siteId: string; maxBytes: number }) {
  const sign = useFetcher<SignResult>();
  const done = useFetcher<DoneResult>();
  const [file, setFile] = useState<File | null>(null);
  const [progress, setProgress] = useState<{ loaded: number; total: number } | null>(null);
  const [error, setError] = useState<string | null>(null);
  const started = useRef<string | null>(null);
  const xhr = useRef<XMLHttpRequest | null>(null);

  useEffect(() => {
    const d = sign.data;
    if (!d || !file) return;
    if (!d.ok) {
      setError(d.error);
      return;
    }
    if (started.current === d.importId) return;
    started.current = d.importId;
    const req = new XMLHttpRequest();
    xhr.current = req;
    req.open("PUT", d.url);
    req.upload.onprogress = (e) => setProgress({ loaded: e.loaded, total: e.lengthComputable ? e.total : file.size });
    req.onload = () => {
      xhr.current = null;
      if (req.status >= 200 && req.status < 300) {
        setProgress({ loaded: file.size, total: file.size });
        done.submit({ intent: "uploaded", importId: d.importId }, { method: "post" });
      } else setError(`The storage refused the upload (HTTP ${req.status}). Try again.`);
    };
    req.onerror = () => {
      xhr.current = null;
      setError("The upload was interrupted. Check the connection and try again.");
    };
    req.onabort = () => {
      xhr.current = null;
      setProgress(null);
      setError("Upload cancelled.");
    };
    req.send(file);
  }, [sign.data, file, done]);

  useEffect(() => {
    const d = done.data;
    if (!d) return;
    // A full page load: the mapping step reads the stored file on the server, and a client
    // navigation could be overtaken by the revalidation that follows this fetcher's action.
    if (d.ok) window.location.assign(`/sites/${siteId}/data/${d.importId}`);
    else setError(d.error);
  }, [done.data, siteId]);

  const uploading = progress !== null && !error;
  const pct = progress && progress.total > 0 ? Math.floor((progress.loaded / progress.total) * 100) : 0;

  return (
    <form
      className="panel space-y-3"
      onSubmit={(e) => {
        e.preventDefault();
        setError(null);
        if (!file) return setError("Choose a CSV file first.");
        if (file.size === 0) return setError("The file is empty.");
        if (file.size > maxBytes) return setError(`The file is ${size(file.size)}; the limit is ${size(maxBytes)}.`);
        started.current = null;
        setProgress({ loaded: 0, total: file.size });
        sign.submit({ intent: "sign", fileName: file.name, size: String(file.size) }, { method: "post" });
      }}
    >
      <h2 className="h2">Upload a production export</h2>
      <p className="text-sm text-muted">
        A CSV from the plant's SCADA: long (<code>timestamp,device,metric,value</code>) or wide (one column per device and
        measurement). Up to {size(maxBytes)}. The file is kept as the record of what arrived.
      </p>
      <div>
        <label className="label" htmlFor="export-file">CSV file</label>
        <input
          id="export-file"
          name="file"
          type="file"
          accept=".csv,.txt,text/csv,text/plain"
          className="input"
          disabled={uploading}
          onChange={(e) => {
            setFile(e.currentTarget.files?.[0] ?? null);
            setError(null);
            setProgress(null);
          }}
        />
      </div>
      {progress ? (
        <div>
          <div
            role="progressbar"
            aria-label="Upload progress"
            aria-valuemin={0}
            aria-valuemax={100}
            aria-valuenow={pct}
            className="h-3 w-full overflow-hidden rounded bg-paper ring-1 ring-line"
          >
            <div className="h-full bg-brand transition-[width]" style={{ width: `${pct}%` }} />
          </div>
          <p className="mt-1 text-sm text-muted" data-testid="upload-progress">
            {pct}% · {size(progress.loaded)} of {size(progress.total)}
            {pct === 100 && !error ? " · checking the file…" : ""}
          </p>
        </div>
      ) : null}
      {error ? <p role="alert" className="field-error">{error}</p> : null}
      <div className="flex gap-2">
        <button type="submit" className="btn" disabled={uploading || !file}>Upload</button>
        {uploading && pct < 100 ? (
          <button type="button" className="btn-secondary" onClick={() => xhr.current?.abort()}>Cancel</button>
        ) : null}
      </div>
    </form>
  );
}
