'use client';
// An SVG plot of one or more series (lines and/or points with vertical error bars) on linear or log axes, with
// tick labels, axis titles and an optional legend. Lobeline's own design: framed plot area, ticks inside, no grid fill.
import { type ReactNode, useId, useRef } from 'react';
import {
  extent,
  formatNumber,
  type LinearScale,
  linearScale,
  logScale,
  logTicks,
  niceTicks,
  positiveExtent,
} from './scales';
import { type MarkerShape, markerPath } from './series-styles';
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
  const clip = useId().replace(/:/g, '');
  const figureRef = useRef<HTMLElement>(null);
  const W = usePlotWidth(figureRef, W_MIN, W_MAX);
  const all = series.flatMap((s) => s.points);
  const xLog = xScale === 'log';
  const yLog = yScale === 'log';
  const xd =
    xDomain ??
    (xLog ? positiveExtent(all.map((p) => p.x)) : null) ??
    extent(
      all.map((p) => p.x),
      undefined,
      0.02,
    );
  const yd =
    yDomain ??
    (yLog ? positiveExtent(all.map((p) => p.y)) : null) ??
    extent(
      all.map((p) => p.y),
      all.map((p) => p.yErr ?? null),
    );
  const x: LinearScale = xLog && xd[0] > 0 ? logScale(xd, [M.l, W - M.r]) : linearScale(xd, [M.l, W - M.r]);
  const y: LinearScale = yLog && yd[0] > 0 ? logScale(yd, [height - M.b, M.t]) : linearScale(yd, [height - M.b, M.t]);
  const xt = xLog ? logTicks(xd[0], xd[1]) : niceTicks(xd[0], xd[1], W < 420 ? 4 : 6);
  const yt = yLog ? logTicks(yd[0], yd[1]) : niceTicks(yd[0], yd[1], 5);
  // a log axis shows only positive values; an error bar reaching below zero is cut at the bottom of the frame
  const yAt = (v: number) => (yLog && !(v > 0) ? height - M.b : y(v));
  return (
    <figure ref={figureRef} className="w-full min-w-0 max-w-3xl" data-testid={rest['data-testid']}>
      <svg
        viewBox={`0 0 ${W} ${height}`}
        className="w-full select-none"
        role="img"
        aria-label={`${yLabel} against ${xLabel}`}
        data-x-scale={xScale}
        data-y-scale={yScale}
      >
        <defs>
          <clipPath id={clip}>
            <rect x={M.l} y={M.t} width={W - M.l - M.r} height={height - M.t - M.b} />
          </clipPath>
        </defs>
        <rect x={M.l} y={M.t} width={W - M.l - M.r} height={height - M.t - M.b} fill="#fbfcfd" stroke="#a5b2c1" />
        {xt.map((v) => (
          <g key={`x${v}`}>
            <line x1={x(v)} x2={x(v)} y1={height - M.b} y2={height - M.b - 5} stroke="#5a6b80" />
            <text x={x(v)} y={height - M.b + 15} textAnchor="middle" className="fill-ink-600 text-[11px]">
              {xTickFormat(v)}
            </text>
          </g>
        ))}
        {yt.map((v) => (
          <g key={`y${v}`}>
            <line x1={M.l} x2={M.l + 5} y1={y(v)} y2={y(v)} stroke="#5a6b80" />
            <line x1={M.l} x2={W - M.r} y1={y(v)} y2={y(v)} stroke="#e6eaef" strokeDasharray="2 4" />
            <text x={M.l - 7} y={y(v) + 4} textAnchor="end" className="fill-ink-600 text-[11px]">
              {formatNumber(v)}
            </text>
          </g>
        ))}
        <text x={(M.l + W - M.r) / 2} y={height - 6} textAnchor="middle" className="fill-ink-800 text-[12px]">
          {xLabel}
        </text>
        <text
          transform={`translate(14 ${(M.t + height - M.b) / 2}) rotate(-90)`}
          textAnchor="middle"
          className="fill-ink-800 text-[12px]"
        >
          {yLabel}
        </text>
        <g clipPath={`url(#${clip})`}>
          {guides.map((g, i) => (
            <g key={`g${g.x}-${g.label ?? ''}-${g.color}`}>
              <line x1={x(g.x)} x2={x(g.x)} y1={M.t} y2={height - M.b} stroke={g.color} strokeDasharray="5 3" />
              {g.label ? (
                <text x={x(g.x) + 4} y={M.t + 12 + (i % 2) * 12} className="text-[10px]" fill={g.color}>
                  {g.label}
                </text>
              ) : null}
            </g>
          ))}
          {series.map((s) => {
            const mode = s.mode ?? 'line';
            const pts = s.points.filter(
              (p) => Number.isFinite(x(p.x)) && Number.isFinite(y(p.y)) && Number.isFinite(p.x) && Number.isFinite(p.y),
            );
            return (
              <g key={s.id}>
                {mode !== 'points' && pts.length > 1 ? (
                  <polyline
                    fill="none"
                    stroke={s.color}
                    strokeWidth={s.width ?? 1.6}
                    strokeDasharray={s.dashed ? '6 4' : undefined}
                    points={pts.map((p) => `${x(p.x).toFixed(1)},${y(p.y).toFixed(1)}`).join(' ')}
                  />
                ) : null}
                {mode !== 'line'
                  ? pts.map((p) => (
                      <g key={`${p.x}:${p.y}:${p.title ?? ''}`}>
                        {p.yErr != null && Number.isFinite(p.yErr) && p.yErr > 0 ? (
                          <g stroke={s.color} strokeWidth={1.2}>
                            <line x1={x(p.x)} x2={x(p.x)} y1={yAt(p.y - p.yErr)} y2={yAt(p.y + p.yErr)} />
                            <line x1={x(p.x) - 3} x2={x(p.x) + 3} y1={yAt(p.y - p.yErr)} y2={yAt(p.y - p.yErr)} />
                            <line x1={x(p.x) - 3} x2={x(p.x) + 3} y1={yAt(p.y + p.yErr)} y2={yAt(p.y + p.yErr)} />
                          </g>
                        ) : null}
                        <path
                          d={markerPath(s.shape ?? 'diamond', x(p.x), y(p.y), 3.4)}
                          fill={p.hollow ? '#ffffff' : s.color}
                          stroke={s.color}
                          strokeWidth={1.3}
                          data-marker={s.shape ?? 'diamond'}
                          data-hollow={p.hollow ? 'true' : undefined}
                        >
                          {p.title ? <title>{p.title}</title> : null}
                        </path>
                      </g>
                    ))
                  : null}
              </g>
            );
          })}
        </g>
      </svg>
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
