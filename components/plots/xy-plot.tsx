'use client';
// A plot of one or more series (lines and/or points with vertical error bars) on linear or log axes, with tick
// labels, axis titles and an optional legend, drawn by Observable Plot (scales, ticks, axes, marks) into an SVG.
// Lobeline's own look: framed plot area, ticks inside, dashed horizontal guides, the app's font and ink colours.
import * as Plot from '@observablehq/plot';
import { type ReactNode, useEffect, useRef } from 'react';
import { extent, formatNumber, logTicks, positiveExtent } from './scales';
import { type MarkerShape, markerPath, plotSymbol } from './series-styles';
import { usePlotWidth } from './use-plot-width';
export interface XYPoint {
  x: number;
  y: number;
  yErr?: number | null;
  /** Drawn hollow (e.g. flagged scans). */
  hollow?: boolean;
  title?: string;
}

export interface XYSeries {
  id: string;
  label: string;
  color: string;
  points: XYPoint[];
  mode?: 'line' | 'points' | 'both';
  dashed?: boolean;
  width?: number;
  /** Marker outline of the points (default diamond); the legend shows it too. */
  shape?: MarkerShape;
}

export type AxisScale = 'linear' | 'log';

export interface XYPlotProps {
  series: XYSeries[];
  xLabel: string;
  yLabel: string;
  xDomain?: [number, number];
  yDomain?: [number, number];
  /** Vertical guide lines (e.g. lobe maxima) with a short label. */
  guides?: { x: number; label?: string; color: string }[];
  height?: number;
  /** Tick formatting of the x axis (default compact numbers). */
  xTickFormat?: (v: number) => string;
  legend?: boolean;
  /** Logarithmic axes draw only positive values (and the positive part of error bars). */
  xScale?: AxisScale;
  yScale?: AxisScale;
  'data-testid'?: string;
  children?: ReactNode;
}

/** Widest drawing in CSS px (and SVG units); narrower containers get a narrower drawing with the same text size. */
const W_MAX = 640;
const W_MIN = 260;
const M = { l: 64, r: 16, t: 14, b: 44 };

type Pt = XYPoint & { lo?: number; hi?: number };

/** The Plot options of an XY plot of `width` px (exported for the unit test; the component renders them). */
export function xyPlotOptions(
  props: Required<
    Pick<XYPlotProps, 'series' | 'xLabel' | 'yLabel' | 'guides' | 'height' | 'xTickFormat' | 'xScale' | 'yScale'>
  > &
    Pick<XYPlotProps, 'xDomain' | 'yDomain'>,
  width: number,
): Plot.PlotOptions {
  const { series, xLabel, yLabel, guides, height, xTickFormat, xScale, yScale, xDomain, yDomain } = props;
  const all = series.flatMap((s) => s.points);
  const xd =
    xDomain ??
    (xScale === 'log' ? positiveExtent(all.map((p) => p.x)) : null) ??
    extent(
      all.map((p) => p.x),
      undefined,
      0.02,
    );
  const yd =
    yDomain ??
    (yScale === 'log' ? positiveExtent(all.map((p) => p.y)) : null) ??
    extent(
      all.map((p) => p.y),
      all.map((p) => p.yErr ?? null),
    );
  const xLog = xScale === 'log' && xd[0] > 0;
  const yLog = yScale === 'log' && yd[0] > 0;
  const ok = (p: XYPoint) => Number.isFinite(p.x) && Number.isFinite(p.y) && (!xLog || p.x > 0) && (!yLog || p.y > 0);
  // a log axis shows only positive values; an error bar reaching below zero is cut at the bottom of the frame
  const cut = (v: number) => (yLog && !(v > 0) ? yd[0] : v);
  const marks: Plot.Markish[] = [
    Plot.frame({ fill: '#fbfcfd', stroke: '#a5b2c1' }),
    Plot.gridY({
      stroke: '#e6eaef',
      strokeOpacity: 1,
      strokeDasharray: '2 4',
      ...(yLog ? { ticks: logTicks(yd[0], yd[1]) } : { ticks: 5 }),
    }),
    Plot.axisX({
      tickSize: -5,
      tickPadding: 9,
      stroke: '#5a6b80',
      fill: 'currentColor',
      tickFormat: xTickFormat,
      ticks: xLog ? logTicks(xd[0], xd[1]) : width < 420 ? 4 : 6,
      label: xLabel,
      labelAnchor: 'center',
      labelArrow: 'none',
      labelOffset: 38,
    }),
    Plot.axisY({
      tickSize: -5,
      tickPadding: 8,
      stroke: '#5a6b80',
      fill: 'currentColor',
      tickFormat: (v: number) => formatNumber(v),
      ticks: yLog ? logTicks(yd[0], yd[1]) : 5,
      label: yLabel,
      labelAnchor: 'center',
      labelArrow: 'none',
      labelOffset: 52,
    }),
  ];
  guides.forEach((g, i) => {
    marks.push(Plot.ruleX([g.x], { stroke: g.color, strokeDasharray: '5 3', clip: true }));
    if (g.label)
      marks.push(
        Plot.text([g.x], {
          x: (v: number) => v,
          frameAnchor: 'top',
          dy: 12 + (i % 2) * 12,
          dx: 4,
          textAnchor: 'start',
          text: () => g.label,
          fill: g.color,
          fontSize: 10,
          clip: true,
        }),
      );
  });
  for (const s of series) {
    const mode = s.mode ?? 'line';
    const pts = s.points.filter(ok);
    if (mode !== 'points' && pts.length > 1)
      marks.push(
        Plot.line(pts, {
          x: 'x',
          y: 'y',
          stroke: s.color,
          strokeWidth: s.width ?? 1.6,
          strokeDasharray: s.dashed ? '6 4' : undefined,
          clip: true,
          // the path carries its series and colour, so that tests and exports can find a series' line
          render(index, scales, values, dimensions, context, next) {
            const g = next?.(index, scales, values, dimensions, context) as SVGElement | null;
            for (const path of g?.querySelectorAll('path') ?? []) {
              path.setAttribute('stroke', s.color);
              path.setAttribute('data-line', s.id);
            }
            return g ?? null;
          },
        }),
      );
    if (mode === 'line') continue;
    const bars: Pt[] = pts
      .filter((p) => p.yErr != null && Number.isFinite(p.yErr) && p.yErr > 0)
      .map((p) => ({ ...p, lo: cut(p.y - (p.yErr as number)), hi: cut(p.y + (p.yErr as number)) }));
    if (bars.length) {
      marks.push(Plot.ruleX(bars, { x: 'x', y1: 'lo', y2: 'hi', stroke: s.color, strokeWidth: 1.2, clip: true }));
      const cap = {
        draw(c: CanvasPath) {
          c.moveTo(-3, 0);
          c.lineTo(3, 0);
        },
      };
      for (const end of ['lo', 'hi'] as const)
        marks.push(
          Plot.dot(bars, { x: 'x', y: end, symbol: cap, stroke: s.color, strokeWidth: 1.2, fill: 'none', clip: true }),
        );
    }
    const shape = s.shape ?? 'diamond';
    marks.push(
      Plot.dot(pts, {
        x: 'x',
        y: 'y',
        symbol: plotSymbol(shape),
        r: 3.4,
        fill: (p: XYPoint) => (p.hollow ? '#ffffff' : s.color),
        stroke: s.color,
        strokeWidth: 1.3,
        title: (p: XYPoint) => p.title ?? null,
        clip: true,
        render(index, scales, values, dimensions, context, next) {
          const g = next?.(index, scales, values, dimensions, context) as SVGElement | null;
          const paths = g ? [...g.querySelectorAll('path')] : [];
          paths.forEach((path, k) => {
            path.setAttribute('data-marker', shape);
            if (pts[index[k] as number]?.hollow) path.setAttribute('data-hollow', 'true');
          });
          return g ?? null;
        },
      }),
    );
  }
  return {
    width,
    height,
    marginLeft: M.l,
    marginRight: M.r,
    marginTop: M.t,
    marginBottom: M.b,
    x: { type: xLog ? 'log' : 'linear', domain: xd },
    y: { type: yLog ? 'log' : 'linear', domain: yd },
    color: { type: 'identity' },
    style: {
      fontFamily: 'inherit',
      fontSize: '11px',
      color: '#4b5a6c',
      background: 'transparent',
      overflow: 'visible',
    },
    ariaLabel: `${yLabel} against ${xLabel}`,
    marks,
  };
}

export function XYPlot({
  series,
  xLabel,
  yLabel,
  xDomain,
  yDomain,
  guides = [],
  height = 280,
  xTickFormat = (v) => formatNumber(v),
  legend = true,
  xScale = 'linear',
  yScale = 'linear',
  ...rest
}: XYPlotProps) {
  const figureRef = useRef<HTMLElement>(null);
  const hostRef = useRef<HTMLDivElement>(null);
  const W = usePlotWidth(figureRef, W_MIN, W_MAX);
  // biome-ignore lint/correctness/useExhaustiveDependencies: xTickFormat is often an inline closure; the plot is redrawn when its data or axes change
  useEffect(() => {
    const host = hostRef.current;
    if (!host) return;
    const svg = Plot.plot(
      xyPlotOptions({ series, xLabel, yLabel, guides, height, xTickFormat, xScale, yScale, xDomain, yDomain }, W),
    ) as SVGSVGElement;
    svg.classList.add('w-full', 'select-none');
    svg.setAttribute('role', 'img');
    svg.setAttribute('data-x-scale', xScale);
    svg.setAttribute('data-y-scale', yScale);
    // the viewBox is the drawing's size; CSS scales it to the figure's width
    svg.removeAttribute('width');
    svg.removeAttribute('height');
    host.replaceChildren(svg);
    return () => svg.remove();
  }, [series, xLabel, yLabel, guides, height, xScale, yScale, xDomain, yDomain, W]);
  return (
    <figure ref={figureRef} className="w-full min-w-0 max-w-3xl" data-testid={rest['data-testid']}>
      <div ref={hostRef} style={{ aspectRatio: `${W} / ${height}` }} />
      {legend && series.length > 1 ? (
        <figcaption className="mt-1 flex flex-wrap gap-x-4 gap-y-1 pl-16 text-micro text-ink-600">
          {series.map((s) => (
            <span
              key={s.id}
              className="inline-flex items-center gap-1.5"
              data-testid="legend-entry"
              data-color={s.color}
              data-marker={(s.mode ?? 'line') === 'line' ? 'line' : (s.shape ?? 'diamond')}
            >
              {(s.mode ?? 'line') === 'line' ? (
                <span
                  className="inline-block h-0.5 w-5"
                  style={{
                    background: s.dashed
                      ? `repeating-linear-gradient(90deg, ${s.color} 0 5px, transparent 5px 8px)`
                      : s.color,
                  }}
                />
              ) : (
                <svg width="20" height="12" aria-hidden="true">
                  {s.mode === 'both' ? <line x1="0" x2="20" y1="6" y2="6" stroke={s.color} strokeWidth="1" /> : null}
                  <path d={markerPath(s.shape ?? 'diamond', 10, 6, 3.6)} fill={s.color} stroke={s.color} />
                </svg>
              )}
              {s.label}
            </span>
          ))}
        </figcaption>
      ) : null}
      {rest.children}
    </figure>
  );
}
