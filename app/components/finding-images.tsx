import { useEffect, useRef, useState } from "react";
import { useFetcher } from "react-router";

export interface PresignResult {
  uploads: { imageId: number; name: string; url: string; thumbUrl: string }[];
  unmatched: string[];
  refused: string[];
}

/** A small PNG drawn from the picture in the browser (no image library on the server). */
async function thumbnail(file: File, maxW = 160): Promise<Blob | null> {
  try {
    const bmp = await createImageBitmap(file);
    const scale = Math.min(1, maxW / bmp.width);
    const canvas = document.createElement("canvas");
    canvas.width = Math.max(1, Math.round(bmp.width * scale));
    canvas.height = Math.max(1, Math.round(bmp.height * scale));
    canvas.getContext("2d")!.drawImage(bmp, 0, 0, canvas.width, canvas.height);
    return await new Promise((resolve) => canvas.toBlob((b) => resolve(b), "image/png"));
  } catch {
    return null;
  }
}

/**
 * Upload pictures straight to object storage: ask the server for presigned PUT URLs (matched
 * to the findings by file name), PUT each file and its thumbnail, then confirm.
 */
export function ImageUpload({ findingId, label = "Upload IR and visual images", hint }: { findingId?: string; label?: string; hint?: string }) {
  const presign = useFetcher<{ presign?: PresignResult; error?: string }>();
  const confirm = useFetcher<{ confirmed?: number; missing?: number; refused?: string[] }>();
  const files = useRef<File[]>([]);
  const [status, setStatus] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  const notesRef = useRef("");
  const inputId = `images-${findingId ?? "flight"}`;

  useEffect(() => {
    const r = presign.data?.presign;
    if (!r || presign.state !== "idle" || !busy) return;
    let cancelled = false;
    (async () => {
      const done: number[] = [];
      let i = 0;
      for (const u of r.uploads) {
        i++;
        setStatus(`Uploading ${i} of ${r.uploads.length}: ${u.name}`);
        const file = files.current.find((f) => f.name === u.name);
        if (!file) continue;
        const put = await fetch(u.url, { method: "PUT", body: file, headers: { "content-type": file.type } }).catch(() => null);
        if (!put?.ok) continue;
        const t = await thumbnail(file);
        if (t) await fetch(u.thumbUrl, { method: "PUT", body: t, headers: { "content-type": "image/png" } }).catch(() => null);
        done.push(u.imageId);
      }
      if (cancelled) return;
      const notes = [r.unmatched.length ? `${r.unmatched.length} not named in any finding (${r.unmatched.slice(0, 3).join(", ")}${r.unmatched.length > 3 ? "…" : ""})` : "", r.refused.length ? `${r.refused.length} refused (${r.refused.slice(0, 3).join(", ")}${r.refused.length > 3 ? "…" : ""}: only PNG, JPEG, WebP or TIFF up to 50 MB)` : ""].filter(Boolean);
      notesRef.current = notes.length ? ` ${notes.join("; ")}.` : "";
      setStatus(`Checking ${done.length} upload${done.length === 1 ? "" : "s"}…`);
      confirm.submit({ intent: "confirm-images", ids: done.join(",") }, { method: "post" });
    })();
    return () => {
      cancelled = true;
    };
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [presign.data, presign.state]);

  useEffect(() => {
    if (confirm.state === "idle" && confirm.data && busy) {
      setBusy(false);
      const n = confirm.data.confirmed ?? 0;
      const refused = confirm.data.refused?.length ? ` ${confirm.data.refused.join(" ")}` : "";
      setStatus(`${n} image${n === 1 ? "" : "s"} stored.${notesRef.current}${refused}`);
    }
  }, [confirm.state, confirm.data, busy]);

  function onChange(e: React.ChangeEvent<HTMLInputElement>) {
    const list = [...(e.target.files ?? [])];
    if (!list.length) return;
    files.current = list;
    setBusy(true);
    setStatus(`Preparing ${list.length} file${list.length === 1 ? "" : "s"}…`);
    presign.submit(
      { intent: "presign", findingId: findingId ?? "", files: JSON.stringify(list.map((f) => ({ name: f.name, size: f.size, type: f.type || "application/octet-stream" }))) },
      { method: "post" },
    );
    e.target.value = "";
  }

  return (
    <div>
      <label className="label" htmlFor={inputId}>{label}</label>
      <input id={inputId} type="file" multiple accept="image/png,image/jpeg,image/webp,image/tiff" className="input" onChange={onChange} disabled={busy} />
      {hint ? <p className="mt-1 text-xs text-muted">{hint}</p> : null}
      {presign.data?.error ? <p className="field-error">{presign.data.error}</p> : null}
      {status ? <p role="status" className="mt-2 text-sm" data-testid="image-upload-status">{status}</p> : null}
    </div>
  );
}

export interface ViewerImage {
  id: number;
  kind: string;
  fileName: string;
  full: string;
  markX: number | null;
  markY: number | null;
}

/** The picture large, with a ring on the finding; people who may edit click to move the ring. */
export function FindingViewer({ title, caption, image, canMark, onClose }: { title: string; caption: string; image: ViewerImage; canMark: boolean; onClose: () => void }) {
  const fetcher = useFetcher();
  const [mark, setMark] = useState<{ x: number; y: number } | null>(image.markX != null && image.markY != null ? { x: image.markX, y: image.markY } : null);
  const closeRef = useRef<HTMLButtonElement>(null);
  useEffect(() => {
    closeRef.current?.focus();
    const onKey = (e: KeyboardEvent) => e.key === "Escape" && onClose();
    window.addEventListener("keydown", onKey);
    return () => window.removeEventListener("keydown", onKey);
  }, [onClose]);
  function place(e: React.MouseEvent<HTMLDivElement>) {
    if (!canMark) return;
    const r = e.currentTarget.getBoundingClientRect();
    const m = { x: (e.clientX - r.left) / r.width, y: (e.clientY - r.top) / r.height };
    setMark(m);
    fetcher.submit({ intent: "mark", imageId: String(image.id), x: String(m.x), y: String(m.y) }, { method: "post" });
  }
  return (
    <div role="dialog" aria-modal="true" aria-label={title} className="fixed inset-0 z-50 flex items-center justify-center bg-black/70 p-4" onClick={onClose}>
      <div className="max-h-full w-full max-w-3xl overflow-auto rounded-lg bg-panel p-4" onClick={(e) => e.stopPropagation()}>
        <div className="mb-2 flex items-start gap-3">
          <div>
            <p className="text-lg font-semibold">{title}</p>
            <p className="text-muted">{caption}</p>
          </div>
          <button ref={closeRef} className="btn-secondary ml-auto" type="button" onClick={onClose}>Close</button>
        </div>
        <div className={`relative inline-block w-full ${canMark ? "cursor-crosshair" : ""}`} onClick={place} data-testid="viewer-image">
          <img src={image.full} alt={`${image.kind === "ir" ? "Infrared" : "Visual"} image ${image.fileName}`} className="block w-full [image-rendering:pixelated]" />
          {mark ? (
            <span
              aria-label="Marked finding"
              data-testid="viewer-mark"
              className="pointer-events-none absolute h-12 w-12 -translate-x-1/2 -translate-y-1/2 rounded-full border-4 border-cyan-300 shadow-[0_0_0_2px_black]"
              style={{ left: `${mark.x * 100}%`, top: `${mark.y * 100}%` }}
            />
          ) : null}
        </div>
        <p className="mt-2 text-sm text-muted">
          {image.fileName} · {image.kind === "ir" ? "infrared" : "visual"}
          {canMark ? " · click the picture to mark where the finding is" : ""}
          {fetcher.state !== "idle" ? " · saving the mark…" : ""}
        </p>
      </div>
    </div>
  );
}
