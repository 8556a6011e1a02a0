'use client';
// The comparison figure (issue 13): one SVG that carries everything a manuscript needs — framed plot area with ticks
// inside, measured series (colour and marker shape from the colour-blind-safe set of series-styles.ts) with 1σ
// statistical bars (horizontal ones too where x has an error) and, where reported, a pale systematic box behind them, the model lines with their own dash
// patterns (in the colour of the series whose conditions they were computed for, grey when shared), both axis titles (the intensity convention written on the intensity axis) and the key inside the
// drawing, so that the exported file is complete on its own.
import { useId, useRef } from 'react';
import {
  extent,
  type LinearScale,
  linearScale,
  logScale,
  logTicks,
  niceTicks,
  positiveExtent,
} from '@/components/plots/scales';
import { markerPath, seriesStyle } from '@/components/plots/series-styles';
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

/** Font size (px, 12 down to 9) at which `text` fits `width` px, at about 0.56 em per character of this font. */
function fitFont(text: string, width: number): number {
  return Math.max(9, Math.min(12, Math.floor(width / (0.56 * Math.max(1, text.length)))));
}

export function ComparisonFigure({
  series,
  models,
  xLabel,
  yLabel,
  xScale,
  yScale,
  errorBars,
  systematics,
  title,
}: {
  series: FigureSeries[];
  models: ModelLine[];
  xLabel: string;
  yLabel: string;
  xScale: 'linear' | 'log';
  yScale: 'linear' | 'log';
  errorBars: boolean;
  systematics: boolean;
  title?: string;
}) {
  const clip = useId().replace(/:/g, '');
  const box = useRef<HTMLDivElement>(null);
  const W = usePlotWidth(box, W_MIN, W_MAX);
  const pts = series.flatMap((s) => s.points);
  const modelPts = models.flatMap((m) => m.points);
  const xs = [...pts.map((p) => p.x), ...modelPts.map((p) => p.x)];
  const ys = [...pts.map((p) => p.y), ...modelPts.map((p) => p.y)];
  const errs = [
    ...pts.map((p) => (errorBars ? (p.err ?? 0) : 0) + (systematics ? (p.sys ?? 0) : 0)),
    ...modelPts.map(() => 0),
  ];
  const xLog = xScale === 'log';
  const yLog = yScale === 'log';
  const xd = (xLog ? positiveExtent(xs) : null) ?? extent(xs, undefined, 0.04);
  const yd = (yLog ? positiveExtent(ys) : null) ?? extent(ys, errs);
  const keyEntries = [
    ...series.map((s, i) => ({ kind: 'series' as const, id: s.key, label: s.label, i })),
    ...models.map((m) => ({ kind: 'model' as const, id: m.id, label: m.label, model: m.model, color: m.color })),
  ];
  const perRow = W < 520 ? 1 : 2;
  const keyRows = Math.ceil(keyEntries.length / perRow);
  const H = PLOT_H + (title ? 18 : 0) + keyRows * KEY_ROW + 12;
  const top = M.t + (title ? 18 : 0);
  const bottom = top + PLOT_H - M.t - M.b;
  const x: LinearScale = xLog && xd[0] > 0 ? logScale(xd, [M.l, W - M.r]) : linearScale(xd, [M.l, W - M.r]);
  const y: LinearScale = yLog && yd[0] > 0 ? logScale(yd, [bottom, top]) : linearScale(yd, [bottom, top]);
  const xt = xLog ? logTicks(xd[0], xd[1]) : niceTicks(xd[0], xd[1], W < 460 ? 4 : 6);
  const yt = yLog ? logTicks(yd[0], yd[1]) : niceTicks(yd[0], yd[1], 5);
  const xTick = tickFormat(xt, xLog);
  const yTick = tickFormat(yt, yLog);
  const yAt = (v: number) => (yLog && !(v > 0) ? bottom : Math.max(top - 4, Math.min(bottom + 4, y(v))));
  const xAt = (v: number) => (xLog && !(v > 0) ? M.l : Math.max(M.l - 4, Math.min(W - M.r + 4, x(v))));
  const keyTop = bottom + M.b + 4;
  const colW = (W - M.l) / perRow;
  return (
    <div ref={box} className="w-full min-w-0 max-w-4xl" data-testid="comparison-figure">
      <svg
        viewBox={`0 0 ${W} ${H}`}
        className="w-full select-none"
        role="img"
        aria-label={`${yLabel} against ${xLabel}`}
        data-series-count={series.length}
        data-model-count={models.length}
      >
        <defs>
          <clipPath id={clip}>
            <rect x={M.l} y={top} width={W - M.l - M.r} height={bottom - top} />
          </clipPath>
        </defs>
        {title ? (
          <text x={M.l} y={14} className="fill-ink-900 text-[13px] font-semibold">
            {title}
          </text>
        ) : null}
        <rect x={M.l} y={top} width={W - M.l - M.r} height={bottom - top} fill="#fdfdfb" stroke="#8c99a8" />
        {xt.map((v) => (
          <g key={`x${v}`}>
            <line x1={x(v)} x2={x(v)} y1={bottom} y2={bottom - 6} stroke="#4a5868" />
            <line x1={x(v)} x2={x(v)} y1={top} y2={top + 6} stroke="#4a5868" />
            <text x={x(v)} y={bottom + 15} textAnchor="middle" className="fill-ink-700 text-[11px]">
              {xTick(v)}
            </text>
          </g>
        ))}
        {yt.map((v) => (
          <g key={`y${v}`}>
            <line x1={M.l} x2={M.l + 6} y1={y(v)} y2={y(v)} stroke="#4a5868" />
            <line x1={W - M.r} x2={W - M.r - 6} y1={y(v)} y2={y(v)} stroke="#4a5868" />
            <text x={M.l - 7} y={y(v) + 4} textAnchor="end" className="fill-ink-700 text-[11px]">
              {yTick(v)}
            </text>
          </g>
        ))}
        {!yLog && yd[0] < 0 && yd[1] > 0 ? (
          <line x1={M.l} x2={W - M.r} y1={y(0)} y2={y(0)} stroke="#c5ced8" strokeWidth={1} />
        ) : null}
        <text
          x={(M.l + W - M.r) / 2}
          y={bottom + 36}
          textAnchor="middle"
          className="fill-ink-900"
          style={{ fontSize: `${fitFont(xLabel, W - M.l - M.r + 40)}px` }}
        >
          {xLabel}
        </text>
        <text
          transform={`translate(16 ${(top + bottom) / 2}) rotate(-90)`}
          textAnchor="middle"
          className="fill-ink-900"
          style={{ fontSize: `${fitFont(yLabel, bottom - top + 30)}px` }}
        >
          {yLabel}
        </text>
        <g clipPath={`url(#${clip})`}>
          {models.map((m) => {
            const st = MODEL_STROKES[m.model];
            const line = m.points.filter((p) => Number.isFinite(x(p.x)) && Number.isFinite(y(p.y)));
            return (
              <polyline
                key={m.id}
                data-model={m.model}
                data-label={m.label}
                fill="none"
                stroke={m.color ?? st.color}
                strokeOpacity={0.85}
                strokeWidth={st.width}
                strokeDasharray={st.dash}
                points={line.map((p) => `${x(p.x).toFixed(1)},${yAt(p.y).toFixed(1)}`).join(' ')}
              />
            );
          })}
          {series.map((s, i) => {
            const style = seriesStyle(i);
            return (
              <g key={s.key} data-series={s.label} data-color={style.color} data-marker={style.shape}>
                {s.joined && s.points.length > 1 ? (
                  <polyline
                    fill="none"
                    stroke={style.color}
                    strokeWidth={1}
                    strokeOpacity={0.7}
                    points={s.points
                      .filter((p) => Number.isFinite(x(p.x)) && Number.isFinite(y(p.y)))
                      .map((p) => `${x(p.x).toFixed(1)},${y(p.y).toFixed(1)}`)
                      .join(' ')}
                  />
                ) : null}
                {s.points.map((p) => {
                  const cx = x(p.x);
                  const cy = y(p.y);
                  if (!Number.isFinite(cx) || !Number.isFinite(cy)) return null;
                  return (
                    <g key={p.id}>
                      {systematics && p.sys != null && p.sys > 0 ? (
                        <rect
                          x={cx - 5}
                          width={10}
                          y={yAt(p.y + p.sys)}
                          height={Math.max(0.5, yAt(p.y - p.sys) - yAt(p.y + p.sys))}
                          fill={style.color}
                          fillOpacity={0.16}
                          data-role="systematic"
                        />
                      ) : null}
                      {errorBars && p.xErr != null && p.xErr > 0 ? (
                        <g stroke={style.color} strokeWidth={1.1} data-role="x-error">
                          <line x1={xAt(p.x - p.xErr)} x2={xAt(p.x + p.xErr)} y1={cy} y2={cy} />
                          <line x1={xAt(p.x - p.xErr)} x2={xAt(p.x - p.xErr)} y1={cy - 2.5} y2={cy + 2.5} />
                          <line x1={xAt(p.x + p.xErr)} x2={xAt(p.x + p.xErr)} y1={cy - 2.5} y2={cy + 2.5} />
                        </g>
                      ) : null}
                      {errorBars && p.err != null && p.err > 0 ? (
                        <g stroke={style.color} strokeWidth={1.1} data-role="error">
                          <line x1={cx} x2={cx} y1={yAt(p.y - p.err)} y2={yAt(p.y + p.err)} />
                          <line x1={cx - 2.5} x2={cx + 2.5} y1={yAt(p.y - p.err)} y2={yAt(p.y - p.err)} />
                          <line x1={cx - 2.5} x2={cx + 2.5} y1={yAt(p.y + p.err)} y2={yAt(p.y + p.err)} />
                        </g>
                      ) : null}
                      <path
                        d={markerPath(style.shape, cx, cy, 3.5)}
                        fill={p.hollow ? '#ffffff' : style.color}
                        fillOpacity={p.hollow ? 1 : 0.6}
                        stroke={style.color}
                        strokeWidth={1.3}
                      >
                        <title>{p.title}</title>
                      </path>
                    </g>
                  );
                })}
              </g>
            );
          })}
        </g>
        <g data-role="key">
          {keyEntries.map((e, k) => {
            const kx = M.l + (k % perRow) * colW;
            const ky = keyTop + Math.floor(k / perRow) * KEY_ROW;
            if (e.kind === 'series') {
              const style = seriesStyle(e.i);
              return (
                <g key={e.id} data-key-series={e.label}>
                  <path d={markerPath(style.shape, kx + 8, ky + 6, 3.6)} fill={style.color} stroke={style.color} />
                  <text x={kx + 20} y={ky + 10} className="fill-ink-800 text-[11px]">
                    {e.label}
                  </text>
                </g>
              );
            }
            const st = MODEL_STROKES[e.model];
            return (
              <g key={e.id} data-key-model={e.label}>
                <line
                  x1={kx}
                  x2={kx + 16}
                  y1={ky + 6}
                  y2={ky + 6}
                  stroke={e.color ?? st.color}
                  strokeWidth={st.width}
                  strokeDasharray={st.dash}
                />
                <text x={kx + 20} y={ky + 10} className="fill-ink-800 text-[11px]">
                  {e.label}
                </text>
              </g>
            );
          })}
        </g>
      </svg>
    </div>
  );
}
