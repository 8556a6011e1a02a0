'use client';
// The raw detector frame of the bench (log scale, y up like the detector's own axes), with the calibration's
// centre as a ring and cross and the excluded pixels marked. A click either puts the centre there or toggles the
// pixel under the pointer in the excluded list, whichever the analyst chose; in the region mode a drag marks a
// rectangle (a background region for the background-scale tool).
import { type MouseEvent, useEffect, useMemo, useRef, useState } from 'react';
import { ylGnBu } from '@/components/plots/colormaps';
import type { PixelRect } from './tools';

const SIDE = 360;

export type ClickMode = 'centre' | 'pixel' | 'region';

export function DetectorView({
  counts,
  nX,
  nY,
  centre,
  badPixels,
  ringRadiusPx,
  mode,
  onPick,
  regions = [],
  onRegion,
}: {
  counts: Float64Array;
  nX: number;
  nY: number;
  centre: [number, number];
  badPixels: [number, number][];
  /** Radius (px) of a guide circle about the centre, e.g. the fitted ring; null for none. */
  ringRadiusPx: number | null;
  mode: ClickMode;
  onPick: (x: number, y: number) => void;
  /** Marked background regions (drawn as dashed rectangles). */
  regions?: PixelRect[];
  /** A rectangle dragged in the region mode. */
  onRegion?: (r: PixelRect) => void;
}) {
  const ref = useRef<HTMLCanvasElement>(null);
  const [drag, setDrag] = useState<{ a: [number, number]; b: [number, number] } | null>(null);
  const scale = SIDE / Math.max(nX, nY);
  const w = Math.round(nX * scale);
  const h = Math.round(nY * scale);

  // one offscreen canvas per frame: every pixel, log10(1 + counts) over the frame's range
  const picture = useMemo(() => {
    if (typeof document === 'undefined') return null;
    const c = document.createElement('canvas');
    c.width = nX;
    c.height = nY;
    const ctx = c.getContext('2d');
    if (!ctx) return null;
    let hi = 0;
    for (const v of counts) if (v > hi) hi = v;
    const lhi = Math.log10(1 + hi) || 1;
    const img = ctx.createImageData(nX, nY);
    for (let iy = 0; iy < nY; iy++) {
      const row = nY - 1 - iy; // y grows upward
      for (let ix = 0; ix < nX; ix++) {
        const v = counts[iy * nX + ix] as number;
        const t = v > 0 ? Math.min(1, Math.log10(1 + v) / lhi) : 0;
        const li = Math.round(t * 255) * 3;
        const o = (row * nX + ix) * 4;
        img.data[o] = ylGnBu.lut[li] as number;
        img.data[o + 1] = ylGnBu.lut[li + 1] as number;
        img.data[o + 2] = ylGnBu.lut[li + 2] as number;
        img.data[o + 3] = 255;
      }
    }
    ctx.putImageData(img, 0, 0);
    return c;
  }, [counts, nX, nY]);

  useEffect(() => {
    const c = ref.current;
    if (!c || !picture) return;
    const dpr = Math.min(2, window.devicePixelRatio || 1);
    c.width = Math.round(w * dpr);
    c.height = Math.round(h * dpr);
    const ctx = c.getContext('2d');
    if (!ctx) return;
    ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
    ctx.imageSmoothingEnabled = false;
    ctx.drawImage(picture, 0, 0, w, h);
    const toX = (x: number) => (x + 0.5) * scale;
    const toY = (y: number) => h - (y + 0.5) * scale;
    // excluded pixels: a small square each
    ctx.strokeStyle = '#c2410c';
    ctx.lineWidth = 1;
    for (const [x, y] of badPixels) {
      const s = Math.max(3, scale);
      ctx.strokeRect(toX(x) - s / 2, toY(y) - s / 2, s, s);
    }
    // centre: cross, plus the guide ring
    const cx = toX(centre[0]);
    const cy = toY(centre[1]);
    ctx.strokeStyle = '#e3770c';
    ctx.lineWidth = 1.5;
    ctx.beginPath();
    ctx.moveTo(cx - 9, cy);
    ctx.lineTo(cx + 9, cy);
    ctx.moveTo(cx, cy - 9);
    ctx.lineTo(cx, cy + 9);
    ctx.stroke();
    if (ringRadiusPx !== null && ringRadiusPx > 0) {
      ctx.setLineDash([4, 4]);
      ctx.beginPath();
      ctx.arc(cx, cy, ringRadiusPx * scale, 0, 2 * Math.PI);
      ctx.stroke();
      ctx.setLineDash([]);
    }
    // background regions (and the one being dragged): violet dashed rectangles over the pixels they hold (the
    // frame's quiet parts, where they go, are pale)
    const rects = drag ? [...regions, toRect(drag.a, drag.b)] : regions;
    ctx.strokeStyle = '#6d28d9';
    ctx.lineWidth = 1.5;
    ctx.fillStyle = 'rgba(109,40,217,0.16)';
    ctx.setLineDash([3, 3]);
    for (const q of rects) {
      const x = Math.min(q.x0, q.x1) * scale;
      const y = h - (Math.max(q.y0, q.y1) + 1) * scale;
      const rw = (Math.abs(q.x1 - q.x0) + 1) * scale;
      const rh = (Math.abs(q.y1 - q.y0) + 1) * scale;
      ctx.fillRect(x, y, rw, rh);
      ctx.strokeRect(x, y, rw, rh);
    }
    ctx.setLineDash([]);
  }, [picture, w, h, scale, centre, badPixels, ringRadiusPx, regions, drag]);

  function at(e: MouseEvent<HTMLCanvasElement>): [number, number] {
    const r = e.currentTarget.getBoundingClientRect();
    const px = ((e.clientX - r.left) / r.width) * w;
    const py = ((e.clientY - r.top) / r.height) * h;
    return [px / scale - 0.5, (h - py) / scale - 0.5];
  }
  const pixelOf = ([x, y]: [number, number]): [number, number] => [
    Math.min(nX - 1, Math.max(0, Math.round(x))),
    Math.min(nY - 1, Math.max(0, Math.round(y))),
  ];

  function click(e: MouseEvent<HTMLCanvasElement>) {
    if (mode === 'region') return;
    const [x, y] = at(e);
    if (mode === 'centre') onPick(Math.round(x * 10) / 10, Math.round(y * 10) / 10);
    else onPick(...pixelOf([x, y]));
  }

  function up(e: MouseEvent<HTMLCanvasElement>) {
    if (mode !== 'region' || !drag) return;
    const b = pixelOf(at(e));
    setDrag(null);
    // a click without a drag marks nothing
    if (Math.abs(b[0] - drag.a[0]) >= 1 && Math.abs(b[1] - drag.a[1]) >= 1) onRegion?.(toRect(drag.a, b));
  }

  const cursor = mode === 'centre' || mode === 'region' ? 'cursor-crosshair' : 'cursor-cell';
  return (
    <canvas
      ref={ref}
      onClick={click}
      onMouseDown={(e) => {
        if (mode !== 'region') return;
        const a = pixelOf(at(e));
        setDrag({ a, b: a });
      }}
      onMouseMove={(e) => {
        if (mode === 'region' && drag) setDrag({ a: drag.a, b: pixelOf(at(e)) });
      }}
      onMouseUp={up}
      onMouseLeave={() => setDrag(null)}
      style={{ width: w, height: h }}
      className={`rounded-md ring-1 ring-ink-100 ${cursor}`}
      aria-label={
        mode === 'centre'
          ? 'Raw detector frame: click to put the centre there'
          : mode === 'region'
            ? 'Raw detector frame: drag a rectangle outside the lobes to mark a background region'
            : 'Raw detector frame: click a pixel to exclude it or to take it back'
      }
      data-testid="bench-detector"
    />
  );
}

function toRect(a: [number, number], b: [number, number]): PixelRect {
  return { x0: Math.min(a[0], b[0]), y0: Math.min(a[1], b[1]), x1: Math.max(a[0], b[0]), y1: Math.max(a[1], b[1]) };
}
