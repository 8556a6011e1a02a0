'use client';
// Three more fitting tools of the bench (issue 15, SCIENCE.md §7.1, §7.3, §7.4), each in a worker of its own:
// the momentum scale from ATI rings (rings suggested from the radial density, ticked, unticked or added with a click
// on it; r² against n fitted), the background scale from rectangles marked on the raw frame outside the lobes, and
// the rotation from a linear-polarization reference scan of the same campaign. Every answer shows its value, error,
// residual and warnings; only "Use …" changes the calibration.
import { useQuery } from '@tanstack/react-query';
import { type MouseEvent, useEffect, useRef, useState } from 'react';
import { formatNumber } from '@/components/plots/scales';
import { XYPlot } from '@/components/plots/xy-plot';
import { Button, ErrorState, Panel } from '@/components/ui';
import { compactInputClass } from '@/components/ui/input-class';
import { apiFetch } from '@/lib/api/client';
import type { DetectorCalibration } from '@/reduction/formats';
import type { BenchFrame } from './compute';
import type { RingSuggestion } from './radial-peaks';
import { ToolWarnings, UseOrDiscard } from './tool-result';
import type { BenchTool, PixelRect, ToolAnswer, ToolInput } from './tools';
import { createTrialRunner } from './use-bench-worker';
import { decodeFrame, type RawFrameResponse } from './wire';

const MEASURED = '#253043';
const FIT = '#e3770c';
/** hc in eV nm (CODATA 2018; SCIENCE.md §1.3): ħω = 1239.841 984 / λ[nm]. */
const HC_EV_NM = 1239.841984;

type Answer<T extends ToolAnswer['tool']> = Extract<ToolAnswer, { tool: T }>;

/** One worker for these tools, made on first use and ended with the panel. */
function useToolWorker() {
  const runner = useRef<ReturnType<typeof createTrialRunner> | null>(null);
  useEffect(
    () => () => {
      runner.current?.close();
      runner.current = null;
    },
    [],
  );
  return (frame: BenchFrame, cal: DetectorCalibration, tool: BenchTool, input: ToolInput) => {
    runner.current ??= createTrialRunner();
    return runner.current.tool(frame, cal, tool, null, input);
  };
}

export function ScaleTools({
  scanId,
  campaignId,
  frame,
  calibration,
  regions,
  onClearRegions,
  regionMode,
  onRegionMode,
  onAccept,
}: {
  scanId: number;
  campaignId: number;
  frame: BenchFrame;
  calibration: DetectorCalibration;
  regions: PixelRect[];
  onClearRegions: () => void;
  regionMode: boolean;
  onRegionMode: (on: boolean) => void;
  onAccept: (patch: Partial<DetectorCalibration>) => void;
}) {
  const run = useToolWorker();
  return (
    <Panel
      title="Scale, background and rotation"
      description="Fits from rings, marked regions and a reference scan; each shows its result first and changes nothing until you use it."
      data-testid="bench-scale-tools"
    >
      <div className="space-y-5">
        <AtiScaleTool frame={frame} calibration={calibration} run={run} onAccept={onAccept} />
        <BackgroundTool
          frame={frame}
          calibration={calibration}
          run={run}
          regions={regions}
          onClear={onClearRegions}
          regionMode={regionMode}
          onRegionMode={onRegionMode}
          onAccept={onAccept}
        />
        <RotationTool scanId={scanId} campaignId={campaignId} calibration={calibration} run={run} onAccept={onAccept} />
      </div>
    </Panel>
  );
}

type Run = ReturnType<typeof useToolWorker>;

function Section({ title, children, testId }: { title: string; children: React.ReactNode; testId: string }) {
  return (
    <section className="space-y-2 border-t border-ink-100 pt-3 first:border-t-0 first:pt-0" data-testid={testId}>
      <h3 className="text-micro font-semibold tracking-wide text-ink-500 uppercase">{title}</h3>
      {children}
    </section>
  );
}

// MOMENTUM SCALE FROM ATI RINGS //

interface Ring {
  r: number;
  on: boolean;
  /** Significance of a suggestion (null: added by hand). */
  z: number | null;
}

function AtiScaleTool({
  frame,
  calibration,
  run,
  onAccept,
}: {
  frame: BenchFrame;
  calibration: DetectorCalibration;
  run: Run;
  onAccept: (patch: Partial<DetectorCalibration>) => void;
}) {
  const [density, setDensity] = useState<Answer<'ring-suggest'> | null>(null);
  const [rings, setRings] = useState<Ring[]>([]);
  const [firstOrder, setFirstOrder] = useState(1);
  const [photon, setPhoton] = useState(() => HC_EV_NM / frame.meta.wavelengthNm);
  const [busy, setBusy] = useState<'suggest' | 'fit' | null>(null);
  const [answer, setAnswer] = useState<Answer<'ati-scale'> | null>(null);
  const [error, setError] = useState<string | null>(null);
  const chosen = rings.filter((q) => q.on).map((q) => q.r);

  async function suggest() {
    setBusy('suggest');
    setError(null);
    setAnswer(null);
    try {
      const a = (await run(frame, calibration, 'ring-suggest', {})) as Answer<'ring-suggest'>;
      setDensity(a);
      setRings(a.suggestions.map((q: RingSuggestion) => ({ r: q.radiusPx, on: true, z: q.significance })));
    } catch (err) {
      setError((err as Error).message);
    } finally {
      setBusy(null);
    }
  }

  async function fit() {
    setBusy('fit');
    setError(null);
    setAnswer(null);
    try {
      setAnswer(
        (await run(frame, calibration, 'ati-scale', {
          ati: { guessesPx: chosen, firstOrder, photonEnergyEv: photon },
        })) as Answer<'ati-scale'>,
      );
    } catch (err) {
      setError((err as Error).message);
    } finally {
      setBusy(null);
    }
  }

  function toggleOrAdd(r: number) {
    setAnswer(null);
    setRings((rs) => {
      const near = rs.findIndex((q) => Math.abs(q.r - r) < 1.5);
      if (near >= 0) return rs.map((q, i) => (i === near ? { ...q, on: !q.on } : q));
      return [...rs, { r, on: true, z: null }].sort((a, b) => a.r - b.r);
    });
  }

  return (
    <Section title="Momentum scale from ATI rings" testId="tool-ati">
      <p className="text-micro text-ink-500">
        Rings of above-threshold ionization sit at E = E₀ + nħω, so r² grows by ħω/κ per order; the slope of r² against
        n gives κ and the scale α = √(2κ/E_h), whatever the absolute order (a wrong first order shifts only E₀).
      </p>
      <Button
        size="sm"
        variant="secondary"
        onClick={suggest}
        isLoading={busy === 'suggest'}
        disabled={busy !== null}
        data-testid="tool-ati-suggest"
      >
        {density ? 'Look for rings again' : 'Look for rings in dN/dr'}
      </Button>
      {density ? (
        <>
          <RadialPicker density={density} rings={rings} onPick={toggleOrAdd} />
          <p className="text-micro text-ink-500">
            Count density per pixel against the corrected radius about the current centre. Click the curve to add a ring
            there, or on a marker to take it out; solid markers are used.
          </p>
          <ul className="flex flex-wrap gap-x-4 gap-y-1 text-small" data-testid="tool-ati-rings">
            {rings.map((q, i) => (
              <li key={q.r}>
                <label className="flex items-center gap-1">
                  <input
                    type="checkbox"
                    className="accent-lobe-600"
                    checked={q.on}
                    onChange={() => {
                      setAnswer(null);
                      setRings((rs) => rs.map((x, j) => (j === i ? { ...x, on: !x.on } : x)));
                    }}
                    data-testid="tool-ati-ring"
                  />
                  <span className="font-mono">{formatNumber(q.r, 4)} px</span>
                  <span className="text-micro text-ink-500">
                    {q.z === null ? 'added' : `${formatNumber(q.z, 2)} σ`}
                  </span>
                </label>
              </li>
            ))}
            {rings.length === 0 ? <li className="text-micro text-ink-500">No rings yet.</li> : null}
          </ul>
          <div className="flex flex-wrap items-end gap-3 text-small text-ink-700">
            <label className="flex flex-col gap-1">
              Order n of the smallest ticked ring
              <input
                type="number"
                step={1}
                min={0}
                className={compactInputClass('w-24')}
                value={firstOrder}
                onChange={(e) => {
                  setAnswer(null);
                  setFirstOrder(Math.max(0, Math.round(Number(e.target.value) || 0)));
                }}
                data-testid="tool-ati-first-order"
              />
            </label>
            <label className="flex flex-col gap-1">
              ħω (eV), from {formatNumber(frame.meta.wavelengthNm, 4)} nm
              <input
                type="number"
                step={0.001}
                className={compactInputClass('w-28')}
                value={Number(photon.toPrecision(7))}
                onChange={(e) => {
                  const v = Number(e.target.value);
                  if (v > 0) {
                    setAnswer(null);
                    setPhoton(v);
                  }
                }}
                data-testid="tool-ati-photon"
              />
            </label>
            <Button
              size="sm"
              onClick={fit}
              isLoading={busy === 'fit'}
              disabled={busy !== null || chosen.length < 2}
              data-testid="tool-ati-fit"
            >
              Fit r² against n ({chosen.length} ring{chosen.length === 1 ? '' : 's'})
            </Button>
          </div>
          <p className="text-micro text-ink-500">
            Consecutive orders are assumed: leave no ring out between two ticked.
          </p>
          <ToolWarnings warnings={density.warnings} />
        </>
      ) : null}
      {error ? <ErrorState message={error} /> : null}
      {answer ? (
        <div className="space-y-2 text-small text-ink-800" data-testid="tool-ati-result">
          <p>
            κ{' '}
            <strong className="font-mono" data-testid="tool-ati-kappa">
              {formatNumber(answer.kappa, 5)} ± {formatNumber(answer.kappaErr, 2)} eV/px²
            </strong>
            , E₀{' '}
            <strong className="font-mono">
              {formatNumber(answer.e0, 4)} ± {formatNumber(answer.e0Err, 2)} eV
            </strong>
            , scale α{' '}
            <strong className="font-mono" data-testid="tool-ati-alpha">
              {formatNumber(answer.alpha, 5)} ± {formatNumber(answer.alphaErr, 2)} a.u./px
            </strong>
            .
          </p>
          <p className="text-micro text-ink-500">
            Weighted line through {answer.rings.length} rings: χ² {formatNumber(answer.chi2, 3)} for {answer.dof} degree
            {answer.dof === 1 ? '' : 's'} of freedom, rms of r² about the line {formatNumber(answer.rmsPx2, 3)} px². The
            scale now is {formatNumber(calibration.momentum_per_pixel_au, 5)} a.u./px.
          </p>
          <XYPlot
            series={[
              {
                id: 'rings',
                label: 'r² of each ring',
                color: MEASURED,
                mode: 'points',
                points: answer.rings.map((q) => ({
                  x: q.order,
                  y: q.radiusPx * q.radiusPx,
                  yErr: 2 * q.radiusPx * q.radiusErrPx,
                })),
              },
              {
                id: 'line',
                label: 'fitted line',
                color: FIT,
                mode: 'line',
                points: [answer.rings[0]!.order - 0.5, answer.rings.at(-1)!.order + 0.5].map((n) => ({
                  x: n,
                  y: answer.interceptPx2 + answer.slopePx2 * n,
                })),
              },
            ]}
            xLabel="ring order n"
            yLabel="r² (px²)"
            height={190}
            data-testid="tool-ati-plot"
          />
          <table className="w-full text-small">
            <thead className="text-left text-micro text-ink-500">
              <tr>
                <th className="py-1">n</th>
                <th>radius (px)</th>
                <th>r² − line (px²)</th>
                <th>in σ</th>
              </tr>
            </thead>
            <tbody className="font-mono" data-testid="tool-ati-residuals">
              {answer.rings.map((q) => (
                <tr key={q.order} className="border-t border-ink-100">
                  <td className="py-1">{q.order}</td>
                  <td>
                    {formatNumber(q.radiusPx, 5)} ± {formatNumber(q.radiusErrPx, 2)}
                  </td>
                  <td>{formatNumber(q.residualPx2, 3)}</td>
                  <td>{formatNumber(q.residualPx2 / (2 * q.radiusPx * q.radiusErrPx), 2)}</td>
                </tr>
              ))}
            </tbody>
          </table>
          <ToolWarnings warnings={answer.warnings} />
          <UseOrDiscard
            label="Use this scale"
            testId="tool-ati-accept"
            onUse={() => onAccept({ momentum_per_pixel_au: answer.alpha })}
            onClose={() => setAnswer(null)}
          />
        </div>
      ) : null}
    </Section>
  );
}

const PW = 400;
const PH = 150;
const PM = { l: 8, r: 8, t: 8, b: 22 };

/** The radial density as a small clickable drawing with the rings marked. */
function RadialPicker({
  density,
  rings,
  onPick,
}: {
  density: Answer<'ring-suggest'>;
  rings: Ring[];
  onPick: (r: number) => void;
}) {
  const { rPx, density: d } = density;
  const rMax = rPx.at(-1) ?? 1;
  // the centre's few bins are often far above everything else: scale to the maximum beyond 5 % of the range
  let hi = 0;
  for (let i = 0; i < d.length; i++) if (rPx[i]! > 0.05 * rMax) hi = Math.max(hi, d[i]!);
  hi = hi || 1;
  const x = (r: number) => PM.l + (r / rMax) * (PW - PM.l - PM.r);
  const y = (v: number) => PH - PM.b - (Math.min(v, hi) / hi) * (PH - PM.t - PM.b);
  const path = rPx.map((r, i) => `${i ? 'L' : 'M'}${x(r).toFixed(1)},${y(d[i]!).toFixed(1)}`).join('');
  const ticks = [0, 0.25, 0.5, 0.75, 1].map((t) => Math.round(t * rMax));
  function click(e: MouseEvent<SVGSVGElement>) {
    const box = e.currentTarget.getBoundingClientRect();
    const sx = ((e.clientX - box.left) / box.width) * PW;
    const r = ((sx - PM.l) / (PW - PM.l - PM.r)) * rMax;
    if (r > 0 && r < rMax) onPick(Math.round(r * 10) / 10);
  }
  return (
    // biome-ignore lint/a11y/useKeyWithClickEvents: the ring list beside it offers the same choices by keyboard
    <svg
      viewBox={`0 0 ${PW} ${PH}`}
      className="w-full max-w-[400px] cursor-crosshair rounded-md bg-white ring-1 ring-ink-100"
      onClick={click}
      role="img"
      aria-label="Radial count density; click to add or remove a ring"
      data-testid="tool-ati-radial"
    >
      <path d={path} fill="none" stroke={MEASURED} strokeWidth={1.2} />
      {rings.map((q) => (
        <line
          key={q.r}
          x1={x(q.r)}
          x2={x(q.r)}
          y1={PM.t}
          y2={PH - PM.b}
          stroke={q.on ? FIT : '#9aa3b2'}
          strokeWidth={q.on ? 1.6 : 1}
          strokeDasharray={q.on ? undefined : '3 3'}
        />
      ))}
      <line x1={PM.l} x2={PW - PM.r} y1={PH - PM.b} y2={PH - PM.b} stroke="#c9ced8" />
      {ticks.map((t) => (
        <text key={t} x={x(t)} y={PH - 6} fontSize={10} textAnchor="middle" fill="#5b6577">
          {t}
        </text>
      ))}
      <text x={PW - PM.r} y={PM.t + 8} fontSize={10} textAnchor="end" fill="#5b6577">
        r (px)
      </text>
    </svg>
  );
}

// BACKGROUND SCALE FROM MARKED REGIONS //

function BackgroundTool({
  frame,
  calibration,
  run,
  regions,
  onClear,
  regionMode,
  onRegionMode,
  onAccept,
}: {
  frame: BenchFrame;
  calibration: DetectorCalibration;
  run: Run;
  regions: PixelRect[];
  onClear: () => void;
  regionMode: boolean;
  onRegionMode: (on: boolean) => void;
  onAccept: (patch: Partial<DetectorCalibration>) => void;
}) {
  const [busy, setBusy] = useState(false);
  const [answer, setAnswer] = useState<Answer<'background-scale'> | null>(null);
  const [error, setError] = useState<string | null>(null);
  // a changed region set makes an old answer stale
  const regionKey = JSON.stringify(regions);
  const [answerKey, setAnswerKey] = useState('');
  const fitted = calibration.background.factor;

  async function fit() {
    setBusy(true);
    setError(null);
    setAnswer(null);
    try {
      setAnswer((await run(frame, calibration, 'background-scale', { regions })) as Answer<'background-scale'>);
      setAnswerKey(regionKey);
    } catch (err) {
      setError((err as Error).message);
    } finally {
      setBusy(false);
    }
  }
  const pixels = regions.reduce((s, q) => s + (Math.abs(q.x1 - q.x0) + 1) * (Math.abs(q.y1 - q.y0) + 1), 0);

  return (
    <Section title="Background scale from marked regions" testId="tool-background">
      {frame.background === null ? (
        <p className="text-micro text-ink-500">This file has no background frame, so there is nothing to scale.</p>
      ) : (
        <>
          <p className="text-micro text-ink-500">
            Drag rectangles on the raw frame where only background falls (outside the lobes and rings); the fit finds
            the factor k that makes the background frame match the signal there (Poisson likelihood).
          </p>
          <div className="flex flex-wrap items-center gap-2">
            <Button
              size="sm"
              variant={regionMode ? 'primary' : 'secondary'}
              onClick={() => onRegionMode(!regionMode)}
              data-testid="tool-background-mark"
            >
              {regionMode ? 'Marking: drag on the frame' : 'Mark regions on the frame'}
            </Button>
            <span className="text-small text-ink-700" data-testid="tool-background-regions">
              {regions.length} region{regions.length === 1 ? '' : 's'}
              {regions.length ? `, ${pixels} px` : ''}
            </span>
            {regions.length ? (
              <Button size="sm" variant="ghost" onClick={onClear} data-testid="tool-background-clear">
                Clear regions
              </Button>
            ) : null}
            <Button
              size="sm"
              onClick={fit}
              isLoading={busy}
              disabled={busy || regions.length === 0}
              data-testid="tool-background-fit"
            >
              Fit the background scale
            </Button>
          </div>
          {fitted !== undefined ? (
            <p className="text-micro text-ink-500">
              This calibration subtracts the background × {formatNumber(fitted, 5)} (fitted) instead of the shot ratio.{' '}
              <button
                type="button"
                className="underline"
                onClick={() => onAccept({ background: { subtract: true, scale_by: 'shots' } })}
              >
                Back to the shot ratio
              </button>
            </p>
          ) : null}
        </>
      )}
      {error ? <ErrorState message={error} /> : null}
      {answer ? (
        <div className="space-y-2 text-small text-ink-800" data-testid="tool-background-result">
          <p>
            Scale k{' '}
            <strong className="font-mono" data-testid="tool-background-k">
              {formatNumber(answer.scale, 5)} ± {formatNumber(answer.err, 2)}
            </strong>
            {answer.shotRatio !== null ? (
              <>
                ; shot ratio <strong className="font-mono">{formatNumber(answer.shotRatio, 5)}</strong>
                {answer.pull !== null ? ` (${formatNumber(answer.pull, 2)} σ apart)` : ''}
              </>
            ) : (
              '; the file states no shot numbers to compare with'
            )}
            .
          </p>
          <p className="text-micro text-ink-500">
            {answer.pixels} pixels, {formatNumber(answer.signalCounts, 4)} signal and{' '}
            {formatNumber(answer.backgroundCounts, 4)} background counts; normalised residual rms{' '}
            {formatNumber(answer.residualRms, 3)} (1 for pure counting noise), χ² per pixel{' '}
            {formatNumber(answer.chi2PerPixel, 3)}.
          </p>
          {answerKey !== regionKey ? (
            <p className="text-micro text-flare-900">The regions changed since this fit; fit again.</p>
          ) : null}
          <ToolWarnings warnings={answer.warnings} testId="tool-background-warnings" />
          <div className="flex gap-2">
            <Button
              size="sm"
              onClick={() => {
                onAccept({ background: { subtract: true, scale_by: 'shots', factor: answer.scale } });
                onRegionMode(false);
                setAnswer(null);
              }}
              data-testid="tool-background-accept"
            >
              Use this scale
            </Button>
            <Button size="sm" variant="ghost" onClick={() => setAnswer(null)}>
              Discard
            </Button>
          </div>
        </div>
      ) : null}
    </Section>
  );
}

// ROTATION FROM A LINEAR-POLARIZATION REFERENCE //

interface ScanRow {
  id: number;
  title: string | null;
  fileName: string | null;
  experimentKind: string | null;
}

function RotationTool({
  scanId,
  campaignId,
  calibration,
  run,
  onAccept,
}: {
  scanId: number;
  campaignId: number;
  calibration: DetectorCalibration;
  run: Run;
  onAccept: (patch: Partial<DetectorCalibration>) => void;
}) {
  const scansQ = useQuery({
    queryKey: ['campaign-scans', campaignId, 'bench-reference'],
    queryFn: () =>
      apiFetch<{ rows: ScanRow[]; total: number }>(`/api/campaigns/${campaignId}/scans?pageSize=200&sort=id&dir=asc`),
  });
  const [refId, setRefId] = useState<number | null>(null);
  const refQ = useQuery({
    queryKey: ['bench-frame', refId, 0],
    enabled: refId !== null,
    queryFn: async () => decodeFrame(await apiFetch<RawFrameResponse>(`/api/scans/${refId}/raw-frame?step=0`)),
    staleTime: Number.POSITIVE_INFINITY,
  });
  const [labAxis, setLabAxis] = useState<number | null>(null);
  const [busy, setBusy] = useState(false);
  const [answer, setAnswer] = useState<Answer<'rotation'> | null>(null);
  const [error, setError] = useState<string | null>(null);
  const ref = refQ.data ?? null;
  const axis = labAxis ?? ref?.meta.majorAxisAngleDeg ?? 0;
  const others = (scansQ.data?.rows ?? []).filter((s) => s.id !== scanId);

  async function fit() {
    if (!ref || refId === null) return;
    setBusy(true);
    setError(null);
    setAnswer(null);
    try {
      setAnswer(
        (await run(ref, calibration, 'rotation', {
          reference: { scanId: refId, frame: ref, labAxisDeg: axis },
        })) as Answer<'rotation'>,
      );
    } catch (err) {
      setError((err as Error).message);
    } finally {
      setBusy(false);
    }
  }

  const ell = ref?.meta.ellipticity ?? null;
  return (
    <Section title="Rotation from a linear-polarization reference" testId="tool-rotation">
      <p className="text-micro text-ink-500">
        With linear light the lobes lie along the polarization axis; their direction on the detector, about the current
        centre, against their lab angle gives the rotation (modulo 180°). The lab angle starts at the file’s
        polarization axis; change it when the lobes lie elsewhere.
      </p>
      {scansQ.isError ? <ErrorState message={scansQ.error.message} onRetry={() => scansQ.refetch()} /> : null}
      <div className="flex flex-wrap items-end gap-3 text-small text-ink-700">
        <label className="flex flex-col gap-1">
          Reference scan of this campaign
          <select
            className={compactInputClass('w-64')}
            value={refId ?? ''}
            onChange={(e) => {
              setRefId(e.target.value ? Number(e.target.value) : null);
              setLabAxis(null);
              setAnswer(null);
              setError(null);
            }}
            data-testid="tool-rotation-scan"
          >
            <option value="">{scansQ.isPending ? 'Loading the scans…' : 'Choose a scan'}</option>
            {others.map((s) => (
              <option key={s.id} value={s.id}>
                #{s.id} {s.title || s.fileName || ''}
                {s.experimentKind ? ` (${s.experimentKind.replaceAll('_', ' ')})` : ''}
              </option>
            ))}
          </select>
        </label>
        <label className="flex flex-col gap-1">
          Lab angle of its lobes’ axis (°)
          <input
            type="number"
            step={0.1}
            className={compactInputClass('w-24')}
            value={axis}
            disabled={!ref}
            onChange={(e) => {
              const v = Number(e.target.value);
              if (e.target.value !== '' && Number.isFinite(v)) {
                setLabAxis(v);
                setAnswer(null);
              }
            }}
            data-testid="tool-rotation-lab-axis"
          />
        </label>
        <Button
          size="sm"
          onClick={fit}
          isLoading={busy || (refId !== null && refQ.isFetching)}
          disabled={busy || !ref}
          data-testid="tool-rotation-fit"
        >
          Fit the rotation
        </Button>
      </div>
      {others.length === 0 && scansQ.data ? (
        <p className="text-micro text-ink-500">This campaign has no other scan to use as a reference.</p>
      ) : null}
      {refQ.isError ? <ErrorState message={refQ.error.message} onRetry={() => refQ.refetch()} /> : null}
      {ref && ell !== null && ell > 0.1 ? (
        <p className="text-micro text-flare-900">
          The file states ellipticity {formatNumber(ell, 2)} for this scan: a linear-polarization reference has ε ≈ 0.
        </p>
      ) : null}
      {error ? <ErrorState message={error} /> : null}
      {answer ? (
        <div className="space-y-2 text-small text-ink-800" data-testid="tool-rotation-result">
          <p>
            Rotation{' '}
            <strong className="font-mono" data-testid="tool-rotation-angle">
              {formatNumber(answer.rotationDeg, 5)}° ± {formatNumber(answer.err, 2)}°
            </strong>{' '}
            (lobe axis on the detector {formatNumber(answer.detectorAxisDeg, 5)}°, lab axis{' '}
            {formatNumber(answer.labAxisDeg, 4)}°; two-fold modulation {formatNumber(answer.modulation, 3)}).
          </p>
          <XYPlot
            series={[
              {
                id: 'counts',
                label: 'reference counts',
                color: MEASURED,
                mode: 'line',
                points: answer.angleDeg.map((x, i) => ({ x, y: answer.counts[i]! })),
              },
              {
                id: 'model',
                label: 'two-fold model',
                color: FIT,
                mode: 'line',
                dashed: true,
                points: answer.angleDeg.map((x, i) => ({ x, y: answer.model[i]! })),
              },
            ]}
            xLabel="detector azimuth (°)"
            yLabel="counts per bin"
            xDomain={[-180, 180]}
            height={180}
            data-testid="tool-rotation-plot"
          />
          <p className="text-micro text-ink-500">
            Residual rms about the two-fold model {formatNumber(answer.residualRms, 3)} counts per bin. The rotation now
            is {formatNumber(calibration.rotation_deg, 4)}°.
          </p>
          <ToolWarnings warnings={answer.warnings} />
          <UseOrDiscard
            label="Use this rotation"
            testId="tool-rotation-accept"
            onUse={() => onAccept({ rotation_deg: answer.rotationDeg })}
            onClose={() => setAnswer(null)}
          />
        </div>
      ) : null}
    </Section>
  );
}
