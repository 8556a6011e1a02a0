'use client';
// The calibration bench of one scan (C7): the analyst moves centre, rotation, scale, detector ellipticity and the
// other calibration and analysis settings, and the calibrated image, the angular distribution with its lobe fits,
// dN/dp, dN/dE and each lobe's offset follow within a frame or two, computed in a web worker by the reducer the
// server runs (compute.ts). Saving makes a new draft version; the trial panel shows what it would change on the
// campaign, and the PI approves it there and starts the re-reduction.
import { useQuery } from '@tanstack/react-query';
import Link from 'next/link';
import { useSearchParams } from 'next/navigation';
import { useEffect, useMemo, useState } from 'react';
import type { CampaignResponse } from '@/components/campaign/types';
import { ylGnBu } from '@/components/plots/colormaps';
import { Heatmap } from '@/components/plots/heatmap';
import { formatNumber } from '@/components/plots/scales';
import { XYPlot } from '@/components/plots/xy-plot';
import { fittedWindow, lobeModelSegments } from '@/components/scans/lobe-model';
import type { ScanResponse } from '@/components/scans/types';
import { Badge, Button, ErrorState, LoadingBlock, PageHeader, Panel } from '@/components/ui';
import { compactInputClass } from '@/components/ui/input-class';
import { apiFetch } from '@/lib/api/client';
import type { VersionDto } from '@/lib/db/queries/calibrations';
import { type AnalysisSettings, type DetectorCalibration, parseCalibration, parseSettings } from '@/reduction/formats';
import { defaultCalibrationFor } from '@/reduction/pipeline';
import type { BenchFrame } from './compute';
import { factorFor } from './compute';
import { Group, Knob, Switch } from './controls';
import { type ClickMode, DetectorView } from './detector-view';
import { ScaleTools } from './scale-tools';
import type { PixelRect } from './tools';
import { ToolsPanel } from './tools-panel';
import { TrialPanel } from './trial-panel';
import { useBenchWorker } from './use-bench-worker';
import { decodeFrame, type RawFrameResponse } from './wire';

const MEASURED = '#253043';
const FIT = '#e3770c';
/** The preview's larger side, pixels. */
const PREVIEW_SIDE = 256;

function pickVersion(versions: VersionDto[], wanted: number | null): VersionDto | null {
  if (wanted !== null) return versions.find((v) => v.id === wanted) ?? null;
  return versions.find((v) => v.isCurrent) ?? versions[0] ?? null;
}

export function BenchView({ scanId }: { scanId: number }) {
  const search = useSearchParams();
  const wantedCal = Number(search.get('calibration')) || null;
  const wantedSet = Number(search.get('settings')) || null;
  const [step, setStep] = useState(0);

  const scanQ = useQuery({
    queryKey: ['scan', scanId],
    queryFn: () => apiFetch<ScanResponse>(`/api/scans/${scanId}`),
  });
  const campaignId = scanQ.data?.scan.campaignId ?? null;
  const campaignQ = useQuery({
    queryKey: ['campaign', campaignId],
    enabled: campaignId !== null,
    queryFn: () => apiFetch<CampaignResponse>(`/api/campaigns/${campaignId}`),
  });
  const calQ = useQuery({
    queryKey: ['versions', campaignId, 'calibration'],
    enabled: campaignId !== null,
    queryFn: () => apiFetch<{ versions: VersionDto[] }>(`/api/campaigns/${campaignId}/calibrations`),
  });
  const setQ = useQuery({
    queryKey: ['versions', campaignId, 'settings'],
    enabled: campaignId !== null,
    queryFn: () => apiFetch<{ versions: VersionDto[] }>(`/api/campaigns/${campaignId}/settings`),
  });
  const frameQ = useQuery({
    queryKey: ['bench-frame', scanId, step],
    queryFn: async () => decodeFrame(await apiFetch<RawFrameResponse>(`/api/scans/${scanId}/raw-frame?step=${step}`)),
    staleTime: Number.POSITIVE_INFINITY,
  });

  if (scanQ.isPending) return <LoadingBlock lines={10} />;
  if (scanQ.isError) return <ErrorState message={scanQ.error.message} onRetry={() => scanQ.refetch()} />;
  const scan = scanQ.data.scan;
  const failed = [campaignQ, calQ, setQ, frameQ].find((q) => q.isError);
  const header = (
    <PageHeader
      eyebrow={
        <span className="flex gap-3">
          <Link href={`/scans/${scan.id}`} className="hover:underline" data-testid="bench-back-to-scan">
            ← {scan.title || scan.fileName || `Scan ${scan.id}`}
          </Link>
          <Link href={`/campaigns/${scan.campaignId}/calibration`} className="hover:underline">
            Calibration versions of {scan.campaignName}
          </Link>
        </span>
      }
      title="Calibration bench"
      description="Adjust the calibration and watch the reduction follow; the computer runs the same reduction as the server, in this browser."
    />
  );
  if (failed?.error) {
    return (
      <div className="space-y-6">
        {header}
        <ErrorState message={failed.error.message} onRetry={() => failed.refetch()} />
      </div>
    );
  }
  if (!campaignQ.data || !calQ.data || !setQ.data) {
    return (
      <div className="space-y-6">
        {header}
        <LoadingBlock lines={10} />
      </div>
    );
  }
  const baseCal = pickVersion(calQ.data.versions, wantedCal);
  const baseSet = pickVersion(setQ.data.versions, wantedSet);
  return (
    <div className="space-y-6">
      {header}
      <Bench
        key={`${baseCal?.id ?? 'none'}-${baseSet?.id ?? 'none'}`}
        scanId={scanId}
        campaign={campaignQ.data}
        nSteps={scan.nSteps ?? 1}
        step={step}
        onStep={setStep}
        frame={frameQ.data ?? null}
        baseCal={baseCal}
        baseSet={baseSet}
      />
    </div>
  );
}

function Bench({
  scanId,
  campaign,
  nSteps,
  step,
  onStep,
  frame,
  baseCal,
  baseSet,
}: {
  scanId: number;
  campaign: CampaignResponse;
  nSteps: number;
  step: number;
  onStep: (k: number) => void;
  frame: BenchFrame | null;
  baseCal: VersionDto | null;
  baseSet: VersionDto | null;
}) {
  const worker = useBenchWorker();
  const [cal, setCal] = useState<DetectorCalibration | null>(() => {
    const r = baseCal ? parseCalibration(baseCal.body) : null;
    return r?.ok ? r.value : null;
  });
  const [settings, setSettings] = useState<AnalysisSettings>(() => {
    const r = parseSettings(baseSet?.body ?? {});
    if (r.ok) return r.value;
    const d = parseSettings({});
    if (!d.ok) throw new Error('default settings invalid');
    return d.value;
  });
  const [full, setFull] = useState(false);
  const [mode, setMode] = useState<ClickMode>('centre');
  const [hotThreshold, setHotThreshold] = useState(0);
  const [regions, setRegions] = useState<PixelRect[]>([]);

  // a calibration from the file when the campaign has none yet
  useEffect(() => {
    if (frame && cal === null) {
      try {
        setCal(defaultCalibrationFor(frame.meta));
      } catch {
        // no nominal scale: the analyst types one (the scale field stays editable)
      }
    }
  }, [frame, cal]);

  useEffect(() => {
    if (frame) worker.load(frame);
  }, [frame, worker.load]);

  const factor = frame && !full ? factorFor(frame.meta.shape.nX, frame.meta.shape.nY, PREVIEW_SIDE) : 1;
  useEffect(() => {
    if (!frame || !cal || !worker.loaded) return;
    worker.request({ calibration: cal, settings, factor, bootstrap: false });
  }, [frame, cal, settings, factor, worker.loaded, worker.request]);

  // the scale slider spans ±50 % of the scale the bench started from (not of the moving value)
  const [scale0, setScale0] = useState<number | null>(null);
  useEffect(() => {
    if (scale0 === null && cal) setScale0(cal.momentum_per_pixel_au);
  }, [cal, scale0]);

  const out = worker.answer?.output ?? null;
  const nX = frame?.meta.shape.nX ?? 0;
  const nY = frame?.meta.shape.nY ?? 0;

  const changedCal = useMemo(() => {
    if (!cal || !baseCal) return cal !== null;
    const r = parseCalibration(baseCal.body);
    return !r.ok || JSON.stringify(r.value) !== JSON.stringify(cal);
  }, [cal, baseCal]);
  const changedSet = useMemo(() => {
    const r = parseSettings(baseSet?.body ?? {});
    return !r.ok || JSON.stringify(r.value) !== JSON.stringify(settings);
  }, [settings, baseSet]);

  const upd = (patch: Partial<DetectorCalibration>) => setCal((c) => (c ? { ...c, ...patch } : c));
  const updSet = (patch: Partial<AnalysisSettings>) => setSettings((s) => ({ ...s, ...patch }));

  function pick(x: number, y: number) {
    if (!cal) return;
    if (mode === 'centre') {
      upd({ center_px: [x, y] });
      return;
    }
    const has = cal.bad_pixels.some(([a, b]) => a === x && b === y);
    upd({
      bad_pixels: has ? cal.bad_pixels.filter(([a, b]) => !(a === x && b === y)) : [...cal.bad_pixels, [x, y]],
    });
  }

  function markAboveThreshold() {
    if (!frame || !cal || !(hotThreshold > 0)) return;
    const seen = new Set(cal.bad_pixels.map(([x, y]) => y * nX + x));
    const add: [number, number][] = [];
    frame.counts.forEach((v, p) => {
      if (v > hotThreshold && !seen.has(p)) add.push([p % nX, Math.floor(p / nX)]);
    });
    upd({ bad_pixels: [...cal.bad_pixels, ...add] });
  }

  const stepResult = out?.step ?? null;
  const angular = out ? Array.from(out.angular) : [];
  const theta = out ? Array.from(out.thetaDeg) : [];
  const fits =
    out && stepResult
      ? stepResult.lobes.flatMap((l, i) =>
          l.width_deg
            ? lobeModelSegments(
                theta,
                angular,
                l.angle_deg,
                l.width_deg,
                fittedWindow(l, out.settings),
                out.settings.peak_model,
              ).map((points, k) => ({ id: `fit${i}-${k}`, label: `lobe ${i + 1} fit`, color: FIT, width: 2, points }))
            : [],
        )
      : [];
  const radiusPx = stepResult?.radius_au && cal ? stepResult.radius_au / cal.momentum_per_pixel_au : null;
  const win = settings.radial_window_au;
  const latency = worker.answer ? Math.round(worker.answer.ms) : null;

  return (
    <div className="space-y-6">
      <div className="grid gap-6 xl:grid-cols-[minmax(0,1fr)_26rem]">
        <div className="space-y-6">
          <Panel
            title="Detector and momentum image"
            description={
              frame
                ? `Step ${step + 1} of ${nSteps} · ${nX} × ${nY} px${factor > 1 ? `, computed on ${Math.floor(nX / factor)} × ${Math.floor(nY / factor)} (${factor} × ${factor} blocks)` : ', computed at full resolution'}`
                : 'Reading the raw frame…'
            }
            actions={
              <span className="flex items-center gap-2 text-micro text-ink-500" data-testid="bench-status">
                {worker.busy ? <Badge tone="info">computing…</Badge> : <Badge tone="good">up to date</Badge>}
                {latency !== null ? <span data-testid="bench-ms">{latency} ms in the worker</span> : null}
              </span>
            }
          >
            {!frame ? (
              <LoadingBlock lines={6} />
            ) : (
              <div className="flex flex-wrap gap-6">
                <div className="space-y-2">
                  <DetectorView
                    counts={frame.counts}
                    nX={nX}
                    nY={nY}
                    centre={cal?.center_px ?? [nX / 2, nY / 2]}
                    badPixels={cal?.bad_pixels ?? []}
                    ringRadiusPx={radiusPx}
                    mode={mode}
                    onPick={pick}
                    regions={regions}
                    onRegion={(r) => setRegions((rs) => [...rs, r])}
                  />
                  <div className="flex items-center gap-2 text-small text-ink-700" role="radiogroup">
                    <span>A click on the frame</span>
                    <Button
                      size="sm"
                      variant={mode === 'centre' ? 'primary' : 'ghost'}
                      onClick={() => setMode('centre')}
                      data-testid="mode-centre"
                    >
                      sets the centre
                    </Button>
                    <Button
                      size="sm"
                      variant={mode === 'pixel' ? 'primary' : 'ghost'}
                      onClick={() => setMode('pixel')}
                      data-testid="mode-pixel"
                    >
                      excludes a pixel
                    </Button>
                    {frame.background ? (
                      <Button
                        size="sm"
                        variant={mode === 'region' ? 'primary' : 'ghost'}
                        onClick={() => setMode('region')}
                        data-testid="mode-region"
                      >
                        marks background
                      </Button>
                    ) : null}
                  </div>
                  <p className="text-micro text-ink-500">
                    Raw counts, log scale. Cross: centre; dashed circle: the fitted radius; squares: excluded pixels;
                    violet rectangles: background regions (drag in the “marks background” mode).
                  </p>
                </div>
                {out ? (
                  <div className="min-w-[18rem] max-w-[440px] flex-1">
                    <Heatmap
                      image={{
                        nx: out.n,
                        ny: out.n,
                        data: out.image,
                        xRange: [-out.pMaxAu, out.pMaxAu],
                        yRange: [-out.pMaxAu, out.pMaxAu],
                      }}
                      colormap={ylGnBu}
                      scale="linear"
                      valueLabel="counts per cell"
                      data-testid="bench-momentum"
                    />
                    <p className="text-micro text-ink-500">Calibrated momentum image, counts per grid cell.</p>
                  </div>
                ) : (
                  <LoadingBlock lines={6} />
                )}
              </div>
            )}
            {worker.error ? (
              <div className="mt-3">
                <ErrorState message={worker.error} />
              </div>
            ) : null}
          </Panel>

          <Panel
            title="Lobes"
            description="Fitted in the radial window; errors are the fit's (no resampling on the bench)."
          >
            {stepResult ? (
              <div className="space-y-3">
                <div className="flex flex-wrap gap-6 text-body" data-testid="bench-summary">
                  <span>
                    Offset{' '}
                    <strong data-testid="bench-offset">
                      {stepResult.offset_deg === null ? '—' : `${formatNumber(stepResult.offset_deg, 4)}°`}
                    </strong>
                    {stepResult.offset_fit_err_deg != null
                      ? ` ± ${formatNumber(stepResult.offset_fit_err_deg, 2)}°`
                      : ''}
                  </span>
                  <span>
                    Radius <strong data-testid="bench-radius">{formatNumber(stepResult.radius_au, 4)}</strong> a.u.
                  </span>
                  <span>
                    Intensity{' '}
                    <strong>
                      {stepResult.intensity_from_radius_Wcm2 === null
                        ? '—'
                        : `${formatNumber(stepResult.intensity_from_radius_Wcm2, 3)} W/cm²`}
                    </strong>
                  </span>
                </div>
                <table className="w-full text-small" data-testid="bench-lobes">
                  <thead className="text-left text-micro text-ink-500">
                    <tr>
                      <th className="py-1">lobe</th>
                      <th>angle (°)</th>
                      <th>expected (°)</th>
                      <th>offset (°)</th>
                      <th>width (°)</th>
                      <th>radius (a.u.)</th>
                    </tr>
                  </thead>
                  <tbody className="font-mono">
                    {stepResult.lobes.map((l, i) => (
                      <tr key={`lobe-${l.expected_deg ?? l.angle_deg}`} className="border-t border-ink-100">
                        <td className="py-1">{i + 1}</td>
                        <td>
                          {formatNumber(l.angle_deg, 4)}
                          {l.angle_fit_err_deg != null ? ` ± ${formatNumber(l.angle_fit_err_deg, 2)}` : ''}
                        </td>
                        <td>{formatNumber(l.expected_deg, 4)}</td>
                        <td data-testid={`bench-lobe-offset-${i}`}>{formatNumber(l.offset_deg, 4)}</td>
                        <td>{formatNumber(l.width_deg, 3)}</td>
                        <td>{formatNumber(l.radius_au, 4)}</td>
                      </tr>
                    ))}
                  </tbody>
                </table>
                {out?.warnings.length ? (
                  <ul className="list-disc pl-5 text-micro text-flare-900" data-testid="bench-warnings">
                    {out.warnings.map((w) => (
                      <li key={w}>{w}</li>
                    ))}
                  </ul>
                ) : null}
              </div>
            ) : (
              <LoadingBlock lines={3} />
            )}
          </Panel>

          <div className="grid gap-6 2xl:grid-cols-3">
            <Panel title="Angular distribution">
              {out ? (
                <XYPlot
                  series={[
                    {
                      id: 'measured',
                      label: 'counts in the window',
                      color: MEASURED,
                      mode: 'line',
                      points: theta.map((x, i) => ({ x, y: angular[i] as number })),
                    },
                    ...fits,
                  ]}
                  guides={(stepResult?.lobes ?? []).map((l, i) => ({
                    x: l.angle_deg,
                    label: `${i + 1}`,
                    color: FIT,
                  }))}
                  xLabel="emission angle (°)"
                  yLabel="counts per bin"
                  xDomain={[-180, 180]}
                  height={220}
                  data-testid="bench-angular"
                />
              ) : null}
            </Panel>
            <Panel title="dN/dp">
              {out ? (
                <XYPlot
                  series={[
                    {
                      id: 'radial',
                      label: 'dN/dp',
                      color: MEASURED,
                      mode: 'line',
                      points: Array.from(out.pAu).map((x, i) => ({ x, y: out.radial[i] as number })),
                    },
                  ]}
                  guides={Array.isArray(win) ? win.map((x) => ({ x, label: 'window', color: FIT })) : []}
                  xLabel="momentum (a.u.)"
                  yLabel="counts per a.u."
                  height={220}
                  data-testid="bench-radial"
                />
              ) : null}
            </Panel>
            <Panel title="dN/dE">
              {out ? (
                <XYPlot
                  series={[
                    {
                      id: 'energy',
                      label: 'dN/dE',
                      color: MEASURED,
                      mode: 'line',
                      points: Array.from(out.energyEv).map((x, i) => ({ x, y: out.dNdE[i] as number })),
                    },
                  ]}
                  xLabel="energy (eV)"
                  yLabel="counts per eV"
                  height={220}
                  data-testid="bench-energy"
                />
              ) : null}
            </Panel>
          </div>
        </div>

        <div className="space-y-6">
          <Panel
            title="Adjust"
            description={
              <>
                Starting from calibration {baseCal ? `v${baseCal.version}` : '(from the file)'} and settings{' '}
                {baseSet ? `v${baseSet.version}` : '(defaults)'}
                {changedCal || changedSet ? (
                  <>
                    {' '}
                    · <span className="text-flare-900">changed, not saved</span>
                  </>
                ) : null}
              </>
            }
            data-testid="bench-controls"
          >
            {!cal || !frame ? (
              <LoadingBlock lines={8} />
            ) : (
              <div className="space-y-4">
                {nSteps > 1 ? (
                  <label className="flex items-center gap-2 text-small text-ink-700">
                    Step
                    <select
                      className={compactInputClass()}
                      value={step}
                      onChange={(e) => onStep(Number(e.target.value))}
                      data-testid="bench-step"
                    >
                      {frame.meta.step.values.map((v, k) => (
                        // biome-ignore lint/suspicious/noArrayIndexKey: a step is its position in the scan
                        <option key={k} value={k}>
                          {k + 1}: {formatNumber(v, 4)} {frame.meta.step.units}
                        </option>
                      ))}
                    </select>
                  </label>
                ) : null}
                <Group title="Geometry">
                  <Knob
                    label="Centre x"
                    unit="px"
                    value={cal.center_px[0]}
                    min={0}
                    max={nX - 1}
                    step={0.1}
                    onChange={(v) => upd({ center_px: [v, cal.center_px[1]] })}
                    testId="centre-x"
                  />
                  <Knob
                    label="Centre y"
                    unit="px"
                    value={cal.center_px[1]}
                    min={0}
                    max={nY - 1}
                    step={0.1}
                    onChange={(v) => upd({ center_px: [cal.center_px[0], v] })}
                    testId="centre-y"
                  />
                  <Knob
                    label="Rotation"
                    unit="°"
                    value={cal.rotation_deg}
                    min={-180}
                    max={180}
                    step={0.05}
                    onChange={(v) => upd({ rotation_deg: v })}
                    testId="rotation"
                  />
                  <Knob
                    label="Scale"
                    unit="a.u./px"
                    value={cal.momentum_per_pixel_au}
                    min={(scale0 ?? cal.momentum_per_pixel_au) * 0.5}
                    max={(scale0 ?? cal.momentum_per_pixel_au) * 1.5}
                    step={(scale0 ?? cal.momentum_per_pixel_au) / 1000}
                    onChange={(v) => v > 0 && upd({ momentum_per_pixel_au: v })}
                    testId="scale"
                  />
                  <Knob
                    label="Stretch ratio"
                    value={cal.detector_ellipticity.ratio}
                    min={0.8}
                    max={1.25}
                    step={0.001}
                    onChange={(v) => v > 0 && upd({ detector_ellipticity: { ...cal.detector_ellipticity, ratio: v } })}
                    testId="ellipse-ratio"
                  />
                  <Knob
                    label="Stretch axis"
                    unit="°"
                    value={cal.detector_ellipticity.axis_deg}
                    min={-90}
                    max={90}
                    step={0.5}
                    onChange={(v) => upd({ detector_ellipticity: { ...cal.detector_ellipticity, axis_deg: v } })}
                    testId="ellipse-axis"
                  />
                  <Switch
                    label="Mirror the frame (x → −x)"
                    checked={cal.mirror}
                    onChange={(v) => upd({ mirror: v })}
                    testId="mirror"
                  />
                </Group>
                <Group title="Pixels and corrections" aside={<span>{cal.bad_pixels.length} excluded</span>}>
                  <div className="flex items-center gap-2 text-small text-ink-700">
                    <span>Exclude pixels above</span>
                    <input
                      type="number"
                      min={0}
                      className={compactInputClass('w-24')}
                      value={hotThreshold || ''}
                      placeholder="counts"
                      onChange={(e) => setHotThreshold(Number(e.target.value) || 0)}
                      aria-label="Counts above which a pixel is excluded"
                      data-testid="hot-threshold"
                    />
                    <Button size="sm" variant="secondary" onClick={markAboveThreshold} disabled={!(hotThreshold > 0)}>
                      Exclude
                    </Button>
                    {cal.bad_pixels.length ? (
                      <Button size="sm" variant="ghost" onClick={() => upd({ bad_pixels: [] })}>
                        Clear all
                      </Button>
                    ) : null}
                  </div>
                  <Switch
                    label="Divide by the flat field"
                    checked={cal.flat_field !== undefined}
                    disabled={cal.flat_field === undefined}
                    hint={
                      cal.flat_field === undefined
                        ? 'This calibration has no gain map.'
                        : 'Off removes the gain map from this calibration.'
                    }
                    onChange={(v) => {
                      if (!v) upd({ flat_field: undefined });
                    }}
                    testId="flat-field"
                  />
                  <Switch
                    label="Subtract the background frame"
                    checked={
                      frame.background !== null && cal.background.subtract && cal.background.scale_by === 'shots'
                    }
                    disabled={frame.background === null}
                    hint={
                      frame.background === null
                        ? 'The file has no background frame.'
                        : cal.background.factor !== undefined
                          ? `Scaled by the fitted factor ${formatNumber(cal.background.factor, 5)}.`
                          : 'Scaled by the ratio of laser shots (signal / background).'
                    }
                    onChange={(v) => upd({ background: { subtract: v, scale_by: v ? 'shots' : 'none' } })}
                    testId="background"
                  />
                </Group>
                <Group title="Analysis">
                  <Switch
                    label="Radial window follows dN/dp"
                    checked={win === 'auto'}
                    onChange={(v) =>
                      updSet({
                        radial_window_au: v
                          ? 'auto'
                          : [
                              Math.max(0, (stepResult?.radius_au ?? settings.grid.p_max_au / 2) * 0.8),
                              (stepResult?.radius_au ?? settings.grid.p_max_au / 2) * 1.2,
                            ],
                      })
                    }
                    testId="window-auto"
                  />
                  {Array.isArray(win) ? (
                    <>
                      <Knob
                        label="Window from"
                        unit="a.u."
                        value={win[0]}
                        min={0}
                        max={settings.grid.p_max_au}
                        step={0.005}
                        onChange={(v) => updSet({ radial_window_au: [Math.min(v, win[1] - 0.01), win[1]] })}
                        testId="window-lo"
                      />
                      <Knob
                        label="Window to"
                        unit="a.u."
                        value={win[1]}
                        min={0}
                        max={settings.grid.p_max_au}
                        step={0.005}
                        onChange={(v) => updSet({ radial_window_au: [win[0], Math.max(v, win[0] + 0.01)] })}
                        testId="window-hi"
                      />
                    </>
                  ) : null}
                  <Knob
                    label="Smoothing σ"
                    unit="°"
                    value={settings.angular_smoothing_deg}
                    min={0}
                    max={15}
                    step={0.5}
                    onChange={(v) => v >= 0 && updSet({ angular_smoothing_deg: v })}
                    testId="smoothing"
                  />
                  <Switch
                    label="Fit window follows each lobe (±3σ)"
                    checked={settings.follow_data?.fit_window ?? false}
                    onChange={(v) =>
                      updSet({
                        follow_data: {
                          grid: settings.follow_data?.grid ?? false,
                          peak_model: settings.follow_data?.peak_model ?? false,
                          fit_window: v,
                        },
                      })
                    }
                    testId="fit-follow"
                  />
                  {!settings.follow_data?.fit_window ? (
                    <Knob
                      label="Fit half-width"
                      unit="°"
                      value={settings.fit_half_width_deg}
                      min={5}
                      max={90}
                      step={1}
                      onChange={(v) => v > 0 && updSet({ fit_half_width_deg: v })}
                      testId="fit-half-width"
                    />
                  ) : null}
                </Group>
                <Group title="Resolution">
                  <Switch
                    label="Compute at full resolution"
                    checked={full}
                    onChange={setFull}
                    hint={`Slower; the preview sums blocks to at most ${PREVIEW_SIDE} px a side.`}
                    testId="full-resolution"
                  />
                </Group>
              </div>
            )}
          </Panel>
          {cal && frame ? <ToolsPanel frame={frame} calibration={cal} ringPx={radiusPx} onAccept={upd} /> : null}
          {cal && frame ? (
            <ScaleTools
              // a new step starts the tools afresh (their rings, regions' fit and answers belong to a frame)
              key={step}
              scanId={scanId}
              campaignId={campaign.campaign.id}
              frame={frame}
              calibration={cal}
              regions={regions}
              onClearRegions={() => setRegions([])}
              regionMode={mode === 'region'}
              onRegionMode={(on) => {
                setMode(on ? 'region' : 'centre');
                // the frame is at the top of the page, the tool far below it: bring the frame to the pointer
                if (on) document.querySelector('[data-testid="bench-detector"]')?.scrollIntoView({ block: 'center' });
              }}
              onAccept={upd}
            />
          ) : null}
        </div>
      </div>

      {cal ? (
        <TrialPanel
          scanId={scanId}
          campaign={campaign}
          calibration={cal}
          settings={settings}
          changedCal={changedCal}
          changedSet={changedSet}
          baseCal={baseCal}
          baseSet={baseSet}
        />
      ) : null}
    </div>
  );
}
