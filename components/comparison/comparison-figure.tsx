'use client';
// The comparison figure (issue 13): one SVG that carries everything a manuscript needs — framed plot area with ticks
// inside, measured series (colour and marker shape from the colour-blind-safe set of series-styles.ts) with 1σ
// statistical bars (horizontal ones too where x has an error) and, where reported, a pale systematic box behind them,
// the model lines with their own dash patterns (in the colour of the series whose conditions they were computed for,
// grey when shared), both axis titles (the intensity convention written on the intensity axis), the title and the
// key inside the drawing, so that the exported file is complete on its own. Scales, ticks, axes and marks are drawn
// by Observable Plot (as in components/plots/xy-plot.tsx); the key is a Plot render function in the bottom margin.
import * as Plot from '@observablehq/plot';
import { useEffect, useRef } from 'react';
import { extent, logTicks, niceTicks, positiveExtent } from '@/components/plots/scales';
import { markerPath, plotSymbol, seriesStyle } from '@/components/plots/series-styles';
import { usePlotWidth } from '@/components/plots/use-plot-width';
import type { ModelName } from '@/lib/comparison/spec';
import { tickFormat } from './ticks';

/** One drawn series: markers with optional bars, optionally joined by a thin line. */
export interface FigureSeries {
  key: string;
  label: string;
  /** Join the markers (phase-delay curves); measured offsets stay unjoined. */
  joined?: boolean;
  points: {
    x: number;
    y: number;
    xErr: number | null;
    err: number | null;
    sys: number | null;
    /** Unique within the series. */
    id: string;
    /** Tooltip, e.g. "He 800 nm elliptical: scan 3, step 1". */
    title: string;
    hollow: boolean;
  }[];
}

export interface ModelLine {
  id: string;
  model: ModelName;
  label: string;
  /** Colour of the series the parameters belong to (grey when they belong to several or none). */
  color?: string;
  points: { x: number; y: number }[];
}

export const MODEL_STROKES: Record<ModelName, { dash: string | undefined; color: string; width: number }> = {
  simple_man: { dash: '2 3', color: '#5a6b80', width: 1.4 },
  trajectory: { dash: undefined, color: '#2b3440', width: 1.8 },
  ensemble: { dash: '1 0', color: '#1f5f8b', width: 2.6 },
  keldysh_rutherford: { dash: '8 4', color: '#7a8798', width: 1.5 },
};

const W_MAX = 760;
const W_MIN = 300;
const M = { l: 70, r: 18, t: 16, b: 48 };
const PLOT_H = 330;
const KEY_ROW = 17;
const TITLE_H = 18;
const INK = '#1f2937';
const TICK_INK = '#4a5868';

/** Font size (px, 12 down to 9) at which `text` fits `width` px, at about 0.56 em per character of this font. */
function fitFont(text: string, width: number): number {
  return Math.max(9, Math.min(12, Math.floor(width / (0.56 * Math.max(1, text.length)))));
}

export interface ComparisonFigureProps {
  series: FigureSeries[];
  models: ModelLine[];
  xLabel: string;
  yLabel: string;
  xScale: 'linear' | 'log';
  yScale: 'linear' | 'log';
  errorBars: boolean;
  systematics: boolean;
  title?: string;
}

type Pt = FigureSeries['points'][number];
type Bar = Pt & { lo: number; hi: number };

/** A short straight stroke as a Plot symbol (the caps of the error bars), horizontal or vertical. */
function capSymbol(vertical: boolean) {
  return {
    draw(c: CanvasPath) {
      if (vertical) {
        c.moveTo(0, -2.5);
        c.lineTo(0, 2.5);
      } else {
        c.moveTo(-2.5, 0);
        c.lineTo(2.5, 0);
      }
    },
  };
}

/** Sets attributes on the group a mark draws (and `each` on its paths), so that tests and exports can find it. */
function tag(attrs: Record<string, string>, each?: (path: SVGPathElement, k: number, index: number[]) => void) {
  return {
    render(
      index: number[],
      scales: Plot.ScaleFunctions,
      values: Plot.ChannelValues,
      dimensions: Plot.Dimensions,
      context: Plot.Context,
      next?: Plot.RenderFunction,
    ) {
      const g = next?.(index, scales, values, dimensions, context) as SVGElement | null;
      if (!g) return null;
      for (const [k, v] of Object.entries(attrs)) g.setAttribute(k, v);
      if (each)
        [...g.querySelectorAll('path')].forEach((p, k) => {
          each(p, k, index);
        });
      return g;
    },
  };
}

/** The Plot options of the comparison figure `width` px wide (exported for tests; the component renders them). */
export function comparisonFigureOptions(props: ComparisonFigureProps, width: number): Plot.PlotOptions {
  const { series, models, xLabel, yLabel, xScale, yScale, errorBars, systematics, title } = props;
  const pts = series.flatMap((s) => s.points);
  const modelPts = models.flatMap((m) => m.points);
  const xs = [...pts.map((p) => p.x), ...modelPts.map((p) => p.x)];
  const ys = [...pts.map((p) => p.y), ...modelPts.map((p) => p.y)];
  const errs = [
    ...pts.map((p) => (errorBars ? (p.err ?? 0) : 0) + (systematics ? (p.sys ?? 0) : 0)),
    ...modelPts.map(() => 0),
  ];
  const xd = (xScale === 'log' ? positiveExtent(xs) : null) ?? extent(xs, undefined, 0.04);
  const yd = (yScale === 'log' ? positiveExtent(ys) : null) ?? extent(ys, errs);
  const xLog = xScale === 'log' && xd[0] > 0;
  const yLog = yScale === 'log' && yd[0] > 0;
  const xt = xLog ? logTicks(xd[0], xd[1]) : niceTicks(xd[0], xd[1], width < 460 ? 4 : 6);
  const yt = yLog ? logTicks(yd[0], yd[1]) : niceTicks(yd[0], yd[1], 5);
  const xTick = tickFormat(xt, xLog);
  const yTick = tickFormat(yt, yLog);
  const ok = (p: { x: number; y: number }) =>
    Number.isFinite(p.x) && Number.isFinite(p.y) && (!xLog || p.x > 0) && (!yLog || p.y > 0);
  // a log axis shows only positive values; a bar reaching below zero is cut at the edge of the frame
  const cutY = (v: number) => (yLog && !(v > 0) ? yd[0] : v);
  const cutX = (v: number) => (xLog && !(v > 0) ? xd[0] : v);

  const keyEntries = [
    ...series.map((s, i) => ({ kind: 'series' as const, id: s.key, label: s.label, i })),
    ...models.map((m) => ({ kind: 'model' as const, id: m.id, label: m.label, model: m.model, color: m.color })),
  ];
  const perRow = width < 520 ? 1 : 2;
  const keyRows = Math.ceil(keyEntries.length / perRow);
  const top = M.t + (title ? TITLE_H : 0);
  const plotBottom = top + PLOT_H - M.t - M.b;
  const marginBottom = M.b + 12 + keyRows * KEY_ROW;
  const height = plotBottom + marginBottom;
  const innerW = width - M.l - M.r;

  const marks: Plot.Markish[] = [
    Plot.frame({ fill: '#fdfdfb', stroke: '#8c99a8' }),
    // ticks inside the frame on all four sides, labels on the bottom and left only
    Plot.axisX({
      anchor: 'bottom',
      ticks: xt,
      tickSize: -6,
      tickPadding: 9,
      tickFormat: xTick,
      label: null,
      stroke: TICK_INK,
    }),
    Plot.axisX({ anchor: 'top', ticks: xt, tickSize: -6, tickFormat: () => '', label: null, stroke: TICK_INK }),
    Plot.axisY({
      anchor: 'left',
      ticks: yt,
      tickSize: -6,
      tickPadding: 8,
      tickFormat: yTick,
      label: null,
      stroke: TICK_INK,
    }),
    Plot.axisY({ anchor: 'right', ticks: yt, tickSize: -6, tickFormat: () => '', label: null, stroke: TICK_INK }),
    Plot.text([xLabel], {
      frameAnchor: 'bottom',
      dy: 36,
      text: (d: string) => d,
      fill: INK,
      fontSize: fitFont(xLabel, innerW + 40),
    }),
    Plot.text([yLabel], {
      frameAnchor: 'left',
      dx: 16 - M.l,
      rotate: -90,
      text: (d: string) => d,
      fill: INK,
      fontSize: fitFont(yLabel, plotBottom - top + 30),
    }),
  ];
  if (title)
    marks.push(
      Plot.text([title], {
        frameAnchor: 'top-left',
        dy: 14 - top,
        lineAnchor: 'bottom',
        textAnchor: 'start',
        text: (d: string) => d,
        fill: INK,
        fontSize: 13,
        fontWeight: 600,
      }),
    );
  if (!yLog && yd[0] < 0 && yd[1] > 0) marks.push(Plot.ruleY([0], { stroke: '#c5ced8', strokeWidth: 1 }));

  for (const m of models) {
    const st = MODEL_STROKES[m.model];
    const line = m.points.filter(ok);
    if (line.length < 2) continue;
    marks.push(
      Plot.line(line, {
        x: 'x',
        y: 'y',
        stroke: m.color ?? st.color,
        strokeOpacity: 0.85,
        strokeWidth: st.width,
        strokeDasharray: st.dash,
        clip: true,
        ...tag({ 'data-role': 'model' }, (path) => {
          path.setAttribute('data-model', m.model);
          path.setAttribute('data-label', m.label);
          path.setAttribute('stroke', m.color ?? st.color);
        }),
      }),
    );
  }

  series.forEach((s, i) => {
    const style = seriesStyle(i);
    const shown = s.points.filter(ok);
    if (s.joined && shown.length > 1)
      marks.push(
        Plot.line(shown, {
          x: 'x',
          y: 'y',
          stroke: style.color,
          strokeWidth: 1,
          strokeOpacity: 0.7,
          clip: true,
          ...tag({}, (path) => {
            path.setAttribute('stroke', style.color);
            path.setAttribute('data-line', s.key);
          }),
        }),
      );
    if (systematics) {
      const boxes: Bar[] = shown
        .filter((p) => p.sys != null && p.sys > 0)
        .map((p) => ({ ...p, lo: cutY(p.y - (p.sys as number)), hi: cutY(p.y + (p.sys as number)) }));
      // a 10 px wide pale box: a rule of that width from y − sys to y + sys
      if (boxes.length)
        marks.push(
          Plot.ruleX(boxes, {
            x: 'x',
            y1: 'lo',
            y2: 'hi',
            stroke: style.color,
            strokeOpacity: 0.16,
            strokeWidth: 10,
            strokeLinecap: 'butt',
            clip: true,
            ...tag({ 'data-role': 'systematic' }),
          }),
        );
    }
    if (errorBars) {
      const xBars: Bar[] = shown
        .filter((p) => p.xErr != null && p.xErr > 0)
        .map((p) => ({ ...p, lo: cutX(p.x - (p.xErr as number)), hi: cutX(p.x + (p.xErr as number)) }));
      if (xBars.length) {
        marks.push(
          Plot.ruleY(xBars, {
            y: 'y',
            x1: 'lo',
            x2: 'hi',
            stroke: style.color,
            strokeWidth: 1.1,
            clip: true,
            ...tag({ 'data-role': 'x-error' }),
          }),
        );
        for (const end of ['lo', 'hi'] as const)
          marks.push(
            Plot.dot(xBars, {
              x: end,
              y: 'y',
              symbol: capSymbol(true),
              stroke: style.color,
              strokeWidth: 1.1,
              fill: 'none',
              clip: true,
            }),
          );
      }
      const yBars: Bar[] = shown
        .filter((p) => p.err != null && p.err > 0)
        .map((p) => ({ ...p, lo: cutY(p.y - (p.err as number)), hi: cutY(p.y + (p.err as number)) }));
      if (yBars.length) {
        marks.push(
          Plot.ruleX(yBars, {
            x: 'x',
            y1: 'lo',
            y2: 'hi',
            stroke: style.color,
            strokeWidth: 1.1,
            clip: true,
            ...tag({ 'data-role': 'error' }),
          }),
        );
        for (const end of ['lo', 'hi'] as const)
          marks.push(
            Plot.dot(yBars, {
              x: 'x',
              y: end,
              symbol: capSymbol(false),
              stroke: style.color,
              strokeWidth: 1.1,
              fill: 'none',
              clip: true,
            }),
          );
      }
    }
    marks.push(
      Plot.dot(shown, {
        x: 'x',
        y: 'y',
        symbol: plotSymbol(style.shape),
        r: 3.5,
        fill: (p: Pt) => (p.hollow ? '#ffffff' : style.color),
        fillOpacity: (p: Pt) => (p.hollow ? 1 : 0.6),
        stroke: style.color,
        strokeWidth: 1.3,
        title: (p: Pt) => p.title,
        clip: true,
        ...tag({ 'data-series': s.label, 'data-color': style.color, 'data-marker': style.shape }, (path, k, index) => {
          path.setAttribute('data-marker', style.shape);
          if (shown[index[k] as number]?.hollow) path.setAttribute('data-hollow', 'true');
        }),
      }),
    );
  });

  // the key, inside the drawing (the exported SVG is the whole figure): series markers, then the model strokes
  marks.push(
    (
      _index: number[],
      _scales: Plot.ScaleFunctions,
      _values: Plot.ChannelValues,
      _dim: Plot.Dimensions,
      context: Plot.Context,
    ) => {
      const doc = context.document;
      const ns = 'http://www.w3.org/2000/svg';
      const el = (name: string, attrs: Record<string, string | number>) => {
        const e = doc.createElementNS(ns, name);
        for (const [k, v] of Object.entries(attrs)) e.setAttribute(k, String(v));
        return e;
      };
      const key = el('g', { 'data-role': 'key' });
      const keyTop = plotBottom + M.b + 4;
      const colW = (width - M.l) / perRow;
      keyEntries.forEach((e, k) => {
        const kx = M.l + (k % perRow) * colW;
        const ky = keyTop + Math.floor(k / perRow) * KEY_ROW;
        const g =
          e.kind === 'series' ? el('g', { 'data-key-series': e.label }) : el('g', { 'data-key-model': e.label });
        if (e.kind === 'series') {
          const st = seriesStyle(e.i);
          g.appendChild(el('path', { d: markerPath(st.shape, kx + 8, ky + 6, 3.6), fill: st.color, stroke: st.color }));
        } else {
          const st = MODEL_STROKES[e.model];
          const line = el('line', {
            x1: kx,
            x2: kx + 16,
            y1: ky + 6,
            y2: ky + 6,
            stroke: e.color ?? st.color,
            'stroke-width': st.width,
          });
          if (st.dash) line.setAttribute('stroke-dasharray', st.dash);
          g.appendChild(line);
        }
        const t = el('text', { x: kx + 20, y: ky + 10, fill: '#27313d', 'font-size': 11, 'text-anchor': 'start' });
        t.textContent = e.label;
        g.appendChild(t);
        key.appendChild(g);
      });
      return key as SVGElement;
    },
  );

  return {
    width,
    height,
    marginLeft: M.l,
    marginRight: M.r,
    marginTop: top,
    marginBottom,
    x: { type: xLog ? 'log' : 'linear', domain: xd },
    y: { type: yLog ? 'log' : 'linear', domain: yd },
    color: { type: 'identity' },
    opacity: { type: 'identity' },
    style: { fontFamily: 'inherit', fontSize: '11px', color: TICK_INK, background: 'transparent', overflow: 'visible' },
    ariaLabel: `${yLabel} against ${xLabel}`,
    marks,
  };
}

export function ComparisonFigure(props: ComparisonFigureProps) {
  const { series, models, xLabel, yLabel, xScale, yScale, errorBars, systematics, title } = props;
  const box = useRef<HTMLDivElement>(null);
  const host = useRef<HTMLDivElement>(null);
  const W = usePlotWidth(box, W_MIN, W_MAX);
  useEffect(() => {
    const el = host.current;
    if (!el) return;
    const svg = Plot.plot(
      comparisonFigureOptions({ series, models, xLabel, yLabel, xScale, yScale, errorBars, systematics, title }, W),
    ) as SVGSVGElement;
    svg.classList.add('w-full', 'select-none');
    svg.setAttribute('role', 'img');
    svg.setAttribute('data-series-count', String(series.length));
    svg.setAttribute('data-model-count', String(models.length));
    // the viewBox is the drawing's size; CSS scales it to the figure's width
    svg.removeAttribute('width');
    svg.removeAttribute('height');
    el.replaceChildren(svg);
    return () => svg.remove();
  }, [series, models, xLabel, yLabel, xScale, yScale, errorBars, systematics, title, W]);
  return (
    <div ref={box} className="w-full min-w-0 max-w-4xl" data-testid="comparison-figure">
      <div ref={host} />
    </div>
  );
}
