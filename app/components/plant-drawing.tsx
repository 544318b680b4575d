import { useEffect, useMemo, useRef, useState, type KeyboardEvent, type PointerEvent, type WheelEvent } from "react";

export interface PlantString {
  id: number;
  combinerId: number;
  number: number;
  x: number;
  y: number;
}

export interface PlantDrawingProps {
  strings: PlantString[];
  combinerNames: Record<number, string>;
  /** Fill of each combiner's strings; default a neutral blue-grey. */
  fillOf?: (combinerId: number) => string;
  /** Text shown on hover/tap for a combiner (in addition to its name). */
  describe?: (combinerId: number) => string;
  /** Outline one combiner, and optionally one of its strings. */
  highlight?: { combinerId: number; stringNumber?: number } | null;
  onSelectCombiner?: (combinerId: number) => void;
  title: string;
  height?: number;
}

function medianGap(values: number[]): number {
  const u = [...new Set(values.map((v) => Math.round(v * 10) / 10))].sort((a, b) => a - b);
  const gaps: number[] = [];
  for (let i = 1; i < u.length; i++) gaps.push(u[i]! - u[i - 1]!);
  if (!gaps.length) return 10;
  gaps.sort((a, b) => a - b);
  return gaps[Math.floor(gaps.length / 2)]!;
}

/**
 * The plant seen from above, one mark per string, grouped by combiner, from the layout's x/y in
 * metres (y grows northward, so it is flipped for the screen). Zoom with the wheel, +/− or the
 * buttons; pan by dragging or with the arrow keys. Later screens colour it through `fillOf`.
 */
export function PlantDrawing({ strings, combinerNames, fillOf, describe, highlight, onSelectCombiner, title, height = 480 }: PlantDrawingProps) {
  const geo = useMemo(() => {
    if (!strings.length) return null;
    let minX = Infinity, maxX = -Infinity, minY = Infinity, maxY = -Infinity;
    for (const s of strings) {
      minX = Math.min(minX, s.x); maxX = Math.max(maxX, s.x);
      minY = Math.min(minY, s.y); maxY = Math.max(maxY, s.y);
    }
    const w = Math.max(1, medianGap(strings.map((s) => s.x)) * 0.85);
    const h = Math.max(1, medianGap(strings.map((s) => s.y)) * 0.7);
    const pad = Math.max(w, h) * 2;
    const byCombiner = new Map<number, PlantString[]>();
    for (const s of strings) {
      const list = byCombiner.get(s.combinerId) ?? [];
      list.push(s);
      byCombiner.set(s.combinerId, list);
    }
    return { minX: minX - pad, minY: minY - pad, width: maxX - minX + 2 * pad + w, height: maxY - minY + 2 * pad + h, maxY, w, h, byCombiner };
  }, [strings]);

  const [view, setView] = useState({ scale: 1, tx: 0, ty: 0 });
  const [hover, setHover] = useState<number | null>(null);
  const drag = useRef<{ x: number; y: number; tx: number; ty: number; moved: boolean } | null>(null);
  const svgRef = useRef<SVGSVGElement>(null);
  // Thousands of marks are drawn in the browser only: rendering them on the server made every
  // page that shows the plant heavy to serve (and they are interactive anyway).
  const [mounted, setMounted] = useState(false);
  useEffect(() => setMounted(true), []);

  if (!geo) return null;
  if (!mounted)
    return (
      <div className="flex items-center justify-center rounded-lg border border-line bg-white text-muted" style={{ height: height + 30 }} aria-busy="true">
        Drawing the plant…
      </div>
    );

  const zoom = (factor: number, cx = 0.5, cy = 0.5) =>
    setView((v) => {
      const scale = Math.min(40, Math.max(1, v.scale * factor));
      const k = scale / v.scale;
      // keep the point under the cursor (cx, cy as fractions of the view) where it is
      return { scale, tx: cx - (cx - v.tx) * k, ty: cy - (cy - v.ty) * k };
    });

  const onWheel = (e: WheelEvent<SVGSVGElement>) => {
    const r = svgRef.current!.getBoundingClientRect();
    zoom(e.deltaY < 0 ? 1.25 : 0.8, (e.clientX - r.left) / r.width, (e.clientY - r.top) / r.height);
  };
  const onPointerDown = (e: PointerEvent<SVGSVGElement>) => {
    drag.current = { x: e.clientX, y: e.clientY, tx: view.tx, ty: view.ty, moved: false };
  };
  const onPointerMove = (e: PointerEvent<SVGSVGElement>) => {
    const d = drag.current;
    if (!d) return;
    const r = svgRef.current!.getBoundingClientRect();
    const dx = (e.clientX - d.x) / r.width;
    const dy = (e.clientY - d.y) / r.height;
    if (Math.abs(dx) + Math.abs(dy) > 0.005) d.moved = true;
    if (d.moved) setView((v) => ({ ...v, tx: d.tx + dx, ty: d.ty + dy }));
  };
  const onPointerUp = () => {
    setTimeout(() => (drag.current = null), 0);
  };
  const onKey = (e: KeyboardEvent<HTMLDivElement>) => {
    const step = 0.1;
    if (e.key === "+" || e.key === "=") zoom(1.25);
    else if (e.key === "-") zoom(0.8);
    else if (e.key === "ArrowLeft") setView((v) => ({ ...v, tx: v.tx + step }));
    else if (e.key === "ArrowRight") setView((v) => ({ ...v, tx: v.tx - step }));
    else if (e.key === "ArrowUp") setView((v) => ({ ...v, ty: v.ty + step }));
    else if (e.key === "ArrowDown") setView((v) => ({ ...v, ty: v.ty - step }));
    else if (e.key === "0") setView({ scale: 1, tx: 0, ty: 0 });
    else return;
    e.preventDefault();
  };

  // The visible window in drawing units.
  const vw = geo.width / view.scale;
  const vh = geo.height / view.scale;
  const vx = geo.minX - (view.tx * geo.width) / view.scale;
  const vy = geo.minY - (view.ty * geo.height) / view.scale;
  const flipY = (y: number) => geo.minY + (geo.maxY - y) + (geo.height - (geo.maxY - geo.minY)) / 2 - geo.h / 2;

  const hovered = hover ?? null;
  return (
    <div className="relative rounded-lg border border-line bg-white" tabIndex={0} onKeyDown={onKey} aria-label={`${title}. Use + and − to zoom, arrow keys to pan, 0 to reset.`} role="group">
      <div className="absolute right-2 top-2 z-10 flex gap-1">
        <button type="button" className="btn-secondary px-2 py-1" onClick={() => zoom(1.25)} aria-label="Zoom in">+</button>
        <button type="button" className="btn-secondary px-2 py-1" onClick={() => zoom(0.8)} aria-label="Zoom out">−</button>
        <button type="button" className="btn-secondary px-2 py-1" onClick={() => setView({ scale: 1, tx: 0, ty: 0 })}>Reset</button>
      </div>
      <svg
        ref={svgRef}
        role="img"
        aria-label={title}
        viewBox={`${vx} ${vy} ${vw} ${vh}`}
        preserveAspectRatio="xMidYMid meet"
        style={{ height, width: "100%", touchAction: "none", cursor: drag.current?.moved ? "grabbing" : "grab" }}
        onWheel={onWheel}
        onPointerDown={onPointerDown}
        onPointerMove={onPointerMove}
        onPointerUp={onPointerUp}
        onPointerLeave={onPointerUp}
      >
        {[...geo.byCombiner.entries()].map(([cid, list]) => {
          const fill = fillOf ? fillOf(cid) : "#7d93a3";
          const isHi = highlight?.combinerId === cid;
          return (
            <g
              key={cid}
              data-combiner={combinerNames[cid] ?? cid}
              onMouseEnter={() => setHover(cid)}
              onMouseLeave={() => setHover((h) => (h === cid ? null : h))}
              onClick={() => {
                if (drag.current?.moved) return;
                setHover(cid);
                onSelectCombiner?.(cid);
              }}
              style={{ cursor: onSelectCombiner ? "pointer" : undefined }}
            >
              <title>{`${combinerNames[cid] ?? cid}${describe ? ` — ${describe(cid)}` : ""}`}</title>
              {list.map((s) => {
                const hiString = isHi && highlight?.stringNumber === s.number;
                return (
                  <rect
                    key={s.id}
                    x={s.x}
                    y={flipY(s.y)}
                    width={geo.w}
                    height={geo.h}
                    fill={fill}
                    stroke={hiString ? "#e0a100" : isHi || hovered === cid ? "#14212b" : "none"}
                    strokeWidth={hiString ? geo.h * 0.45 : geo.h * 0.18}
                  />
                );
              })}
            </g>
          );
        })}
      </svg>
      <div className="min-h-6 border-t border-line px-3 py-1 text-sm text-muted" aria-live="polite">
        {hovered !== null ? <span><strong className="text-ink">{combinerNames[hovered]}</strong>{describe ? ` — ${describe(hovered)}` : ""}</span> : "Hover or tap a combiner for details."}
      </div>
    </div>
  );
}
