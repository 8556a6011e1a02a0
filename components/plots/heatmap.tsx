'use client';
// A momentum image (or phase map) drawn on a canvas, with axes in a.u., a colour bar, linear/log scale, zoom by
// dragging a rectangle (reset button), and an SVG layer on top for overlays (lobe markers, simple-man directions,
// regions). In `region` mode a drag reports a rectangle in data coordinates instead of zooming. The frame, ticks and
// axis titles and the colour legend (a ramp of the colour map, linear or log) are drawn by Observable Plot; the
// image stays a canvas, because thousands of cells are faster as pixels than as SVG rectangles.
import * as Plot from '@observablehq/plot';
import { type ReactNode, useEffect, useMemo, useRef, useState } from 'react';
import { type ColorMap, colorAt } from './colormaps';
import { formatNumber, linearScale } from './scales';

export interface HeatmapImage {
  nx: number;
  ny: number;
  /** Row-major [iy][ix], iy = 0 at the lowest py. */
  data: Float32Array;
  xRange: [number, number];
  yRange: [number, number];
}

export interface DataRect {
  x0: number;
  x1: number;
  y0: number;
  y1: number;
}

export interface HeatmapProps {
  image: HeatmapImage;
  colormap: ColorMap;
  scale: 'linear' | 'log';
  /** Fixed value range (e.g. [−π, π] for phase); default from the data. */
  valueRange?: [number, number];
  valueLabel: string;
  xLabel?: string;
  yLabel?: string;
  mode?: 'zoom' | 'region';
  onRegion?: (rect: DataRect) => void;
  /** SVG drawn over the image; `toPx` maps data coordinates to the SVG's pixels. */
  overlay?: (toPx: (x: number, y: number) => [number, number], view: DataRect) => ReactNode;
  colorbarTicks?: { value: number; label: string }[];
  'data-testid'?: string;
}

const SIZE = 440;
const M = { l: 52, r: 12, t: 10, b: 40 };

function valueExtent(data: Float32Array, log: boolean): [number, number] {
  let lo = Number.POSITIVE_INFINITY;
  let hi = Number.NEGATIVE_INFINITY;
  for (const v of data) {
    if (!Number.isFinite(v) || (log && v <= 0)) continue;
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  if (!Number.isFinite(lo)) return [0, 1];
  return lo === hi ? [lo, lo + 1] : [lo, hi];
}

export function Heatmap({
  image,
  colormap,
  scale,
  valueRange,
  valueLabel,
  xLabel = 'p_x (a.u.)',
  yLabel = 'p_y (a.u.)',
  mode = 'zoom',
  onRegion,
  overlay,
  colorbarTicks,
  ...rest
}: HeatmapProps) {
  const canvasRef = useRef<HTMLCanvasElement>(null);
  const axesRef = useRef<SVGGElement>(null);
  const legendRef = useRef<HTMLDivElement>(null);
  const full: DataRect = useMemo(() => {
    // cell edges: half a cell beyond the first and last centre
    const dx = image.nx > 1 ? (image.xRange[1] - image.xRange[0]) / (image.nx - 1) : 1;
    const dy = image.ny > 1 ? (image.yRange[1] - image.yRange[0]) / (image.ny - 1) : 1;
    return {
      x0: image.xRange[0] - dx / 2,
      x1: image.xRange[1] + dx / 2,
      y0: image.yRange[0] - dy / 2,
      y1: image.yRange[1] + dy / 2,
    };
  }, [image]);
  const [view, setView] = useState<DataRect>(full);
  const [drag, setDrag] = useState<{ a: [number, number]; b: [number, number] } | null>(null);
  useEffect(() => setView(full), [full]);

  const log = scale === 'log';
  const [vmin, vmax] = useMemo(() => {
    if (valueRange) return valueRange;
    const [lo, hi] = valueExtent(image.data, log);
    // log: five decades below the maximum at most, so that one bright pixel does not wash out the image
    return log ? [Math.max(lo, hi / 1e5), hi] : [Math.min(0, lo), hi];
  }, [image, log, valueRange]);

  // Paint the full image once into an offscreen canvas, then draw the viewed part of it.
  const offscreen = useMemo(() => {
    if (typeof document === 'undefined') return null;
    const c = document.createElement('canvas');
    c.width = image.nx;
    c.height = image.ny;
    const ctx = c.getContext('2d');
    if (!ctx) return null;
    const img = ctx.createImageData(image.nx, image.ny);
    const lmin = Math.log10(vmin > 0 ? vmin : 1e-12);
    const lmax = Math.log10(vmax > 0 ? vmax : 1);
    for (let iy = 0; iy < image.ny; iy++) {
      const row = image.ny - 1 - iy; // py grows upward
      for (let ix = 0; ix < image.nx; ix++) {
        const v = image.data[iy * image.nx + ix] as number;
        const o = (row * image.nx + ix) * 4;
        if (!Number.isFinite(v)) {
          img.data[o + 3] = 0;
          continue;
        }
        let t: number;
        if (colormap.cyclic) t = (v - vmin) / (vmax - vmin || 1);
        else if (log) t = v <= 0 ? 0 : (Math.log10(v) - lmin) / (lmax - lmin || 1);
        else t = (v - vmin) / (vmax - vmin || 1);
        t = colormap.cyclic ? ((t % 1) + 1) % 1 : Math.min(1, Math.max(0, t));
        const li = Math.round(t * 255) * 3;
        img.data[o] = colormap.lut[li] as number;
        img.data[o + 1] = colormap.lut[li + 1] as number;
        img.data[o + 2] = colormap.lut[li + 2] as number;
        img.data[o + 3] = 255;
      }
    }
    ctx.putImageData(img, 0, 0);
    return c;
  }, [image, colormap, log, vmin, vmax]);

  const pw = SIZE - M.l - M.r;
  const ph = SIZE - M.t - M.b;
  const sx = linearScale([view.x0, view.x1], [M.l, M.l + pw]);
  const sy = linearScale([view.y0, view.y1], [M.t + ph, M.t]);

  useEffect(() => {
    const c = canvasRef.current;
    if (!c || !offscreen) return;
    const dpr = typeof window === 'undefined' ? 1 : Math.min(2, window.devicePixelRatio || 1);
    c.width = Math.round(pw * dpr);
    c.height = Math.round(ph * dpr);
    const ctx = c.getContext('2d');
    if (!ctx) return;
    ctx.imageSmoothingEnabled = false;
    // blank (masked) cells: dark under the sequential map, light grey under the cyclic one
    ctx.fillStyle = colormap.cyclic ? '#e6eaef' : '#0d1420';
    ctx.fillRect(0, 0, c.width, c.height);
    const cw = (full.x1 - full.x0) / image.nx;
    const chh = (full.y1 - full.y0) / image.ny;
    const srcX = (view.x0 - full.x0) / cw;
    const srcW = (view.x1 - view.x0) / cw;
    const srcY = (full.y1 - view.y1) / chh;
    const srcH = (view.y1 - view.y0) / chh;
    ctx.drawImage(offscreen, srcX, srcY, srcW, srcH, 0, 0, c.width, c.height);
  }, [offscreen, view, full, image.nx, image.ny, pw, ph, colormap.cyclic]);

  const toData = (e: React.PointerEvent<SVGSVGElement>): [number, number] => {
    const r = e.currentTarget.getBoundingClientRect();
    const px = ((e.clientX - r.left) / r.width) * SIZE;
    const py = ((e.clientY - r.top) / r.height) * SIZE;
    return [sx.invert(Math.min(M.l + pw, Math.max(M.l, px))), sy.invert(Math.min(M.t + ph, Math.max(M.t, py)))];
  };

  function finishDrag() {
    if (!drag) return;
    const rect: DataRect = {
      x0: Math.min(drag.a[0], drag.b[0]),
      x1: Math.max(drag.a[0], drag.b[0]),
      y0: Math.min(drag.a[1], drag.b[1]),
      y1: Math.max(drag.a[1], drag.b[1]),
    };
    setDrag(null);
    const minSize = ((view.x1 - view.x0) / pw) * 6; // ignore clicks (under ~6 screen pixels)
    if (rect.x1 - rect.x0 < minSize || rect.y1 - rect.y0 < minSize) return;
    if (mode === 'region') onRegion?.(rect);
    else setView(rect);
  }

  const zoomed = view.x0 !== full.x0 || view.x1 !== full.x1 || view.y0 !== full.y0 || view.y1 !== full.y1;

  // Frame, ticks and axis titles of the viewed part: Plot's linear scales over the same pixel ranges as sx and sy.
  useEffect(() => {
    const g = axesRef.current;
    if (!g) return;
    const svg = Plot.plot({
      width: SIZE,
      height: SIZE,
      marginLeft: M.l,
      marginRight: M.r,
      marginTop: M.t,
      marginBottom: M.b,
      x: { domain: [view.x0, view.x1] },
      y: { domain: [view.y0, view.y1] },
      style: {
        fontFamily: 'inherit',
        fontSize: '11px',
        color: '#4b5a6c',
        background: 'transparent',
        overflow: 'visible',
      },
      marks: [
        Plot.frame({ stroke: '#5a6b80' }),
        Plot.axisX({
          ticks: 5,
          tickSize: 4,
          tickPadding: 3,
          stroke: '#5a6b80',
          tickFormat: (v: number) => formatNumber(v, 2),
          label: xLabel,
          labelAnchor: 'center',
          labelArrow: 'none',
          labelOffset: 34,
        }),
        Plot.axisY({
          ticks: 5,
          tickSize: 4,
          tickPadding: 3,
          stroke: '#5a6b80',
          tickFormat: (v: number) => formatNumber(v, 2),
          label: yLabel,
          labelAnchor: 'center',
          labelArrow: 'none',
          labelOffset: 40,
        }),
      ],
    }) as SVGSVGElement;
    svg.setAttribute('x', '0');
    svg.setAttribute('y', '0');
    svg.style.pointerEvents = 'none';
    svg.setAttribute('data-plot', 'axes');
    g.replaceChildren(svg);
    return () => svg.remove();
  }, [view, xLabel, yLabel]);

  // The colour legend: a ramp of the colour map over [vmin, vmax] on a linear or log scale, with Plot's ticks (or the
  // caller's, e.g. −π … π for a phase).
  useEffect(() => {
    const host = legendRef.current;
    if (!host) return;
    const legend = Plot.legend({
      color: {
        type: log && !colormap.cyclic ? 'log' : 'linear',
        domain: [vmin, vmax],
        interpolate: (t: number) => colorAt(colormap, t),
      },
      label: valueLabel,
      width: SIZE - M.l - M.r + 24,
      marginLeft: 12,
      marginRight: 12,
      ticks: colorbarTicks ? colorbarTicks.map((t) => t.value) : log ? niceLogTicks(vmin, vmax) : 5,
      tickFormat: (v: number) =>
        colorbarTicks?.find((t) => t.value === v)?.label ?? formatNumber(v, log ? 2 : undefined),
      style: { fontFamily: 'inherit', fontSize: '10px', color: '#4b5a6c', background: 'transparent' },
    }) as unknown as SVGSVGElement;
    legend.removeAttribute('width');
    legend.removeAttribute('height');
    legend.classList.add('w-full');
    legend.setAttribute('role', 'img');
    legend.setAttribute('aria-label', `colour legend: ${valueLabel}`);
    legend.setAttribute('data-testid', 'colour-legend');
    legend.setAttribute('data-scale', log && !colormap.cyclic ? 'log' : 'linear');
    host.replaceChildren(legend);
    return () => legend.remove();
  }, [colormap, log, vmin, vmax, valueLabel, colorbarTicks]);

  return (
    <div className="flex min-w-0 items-start gap-3" data-testid={rest['data-testid']}>
      <div className="relative w-full min-w-0 max-w-[440px]">
        <div className="relative" style={{ aspectRatio: '1 / 1' }}>
          <canvas
            ref={canvasRef}
            className="absolute"
            style={{
              left: `${(M.l / SIZE) * 100}%`,
              top: `${(M.t / SIZE) * 100}%`,
              width: `${(pw / SIZE) * 100}%`,
              height: `${(ph / SIZE) * 100}%`,
              imageRendering: 'pixelated',
            }}
          />
          <svg
            viewBox={`0 0 ${SIZE} ${SIZE}`}
            className={`absolute inset-0 h-full w-full touch-none ${mode === 'region' ? 'cursor-crosshair' : 'cursor-zoom-in'}`}
            role="img"
            aria-label={`${valueLabel} on the momentum plane`}
            onPointerDown={(e) => {
              e.currentTarget.setPointerCapture(e.pointerId);
              const p = toData(e);
              setDrag({ a: p, b: p });
            }}
            onPointerMove={(e) => drag && setDrag({ a: drag.a, b: toData(e) })}
            onPointerUp={finishDrag}
            onPointerCancel={() => setDrag(null)}
          >
            <defs>
              <clipPath id="hm-plot">
                <rect x={M.l} y={M.t} width={pw} height={ph} />
              </clipPath>
            </defs>
            <g ref={axesRef} />
            <g clipPath="url(#hm-plot)">{overlay?.((x, y) => [sx(x), sy(y)], view)}</g>
            {drag ? (
              <rect
                x={Math.min(sx(drag.a[0]), sx(drag.b[0]))}
                y={Math.min(sy(drag.a[1]), sy(drag.b[1]))}
                width={Math.abs(sx(drag.b[0]) - sx(drag.a[0]))}
                height={Math.abs(sy(drag.b[1]) - sy(drag.a[1]))}
                fill={mode === 'region' ? 'rgba(249,154,37,0.15)' : 'rgba(255,255,255,0.12)'}
                stroke={mode === 'region' ? '#f99a25' : '#ffffff'}
                strokeDasharray="4 3"
              />
            ) : null}
          </svg>
        </div>
        {zoomed ? (
          <button
            type="button"
            onClick={() => setView(full)}
            className="absolute top-3 right-4 rounded bg-white/90 px-2 py-0.5 text-micro font-medium text-ink-800 shadow ring-1 ring-ink-200 hover:bg-white"
          >
            Reset zoom
          </button>
        ) : null}
        <div
          ref={legendRef}
          style={{ marginLeft: `${((M.l - 12) / SIZE) * 100}%`, width: `${((pw + 24) / SIZE) * 100}%` }}
        />
      </div>
    </div>
  );
}

function niceLogTicks(lo: number, hi: number): number[] {
  if (!(lo > 0) || !(hi > 0)) return [];
  const out: number[] = [];
  for (let e = Math.ceil(Math.log10(lo)); e <= Math.floor(Math.log10(hi)); e++) out.push(10 ** e);
  return out.length ? out : [lo, hi];
}
