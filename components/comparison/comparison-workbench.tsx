'use client';
// The comparison page (issue 13, PRODUCT.md C8/C9): pick campaigns or single scans of any team one reads, say in one
// sentence what to draw, see the figure with model lines and the residuals, export the plotted numbers and the figure,
// keep it under a stable address. Data from /api/comparisons/* (TanStack Query); the server checks every access.
import { useQueries, useQuery, useQueryClient } from '@tanstack/react-query';
import { useRouter } from 'next/navigation';
import { useMemo, useRef, useState } from 'react';
import { downloadBlob } from '@/components/campaign/trend-export';
import { seriesStyle } from '@/components/plots/series-styles';
import { Badge, Button, ConfirmDialog, EmptyState, ErrorState, LoadingBlock, PageHeader, Panel } from '@/components/ui';
import { compactInputClass, inputClass } from '@/components/ui/input-class';
import { ApiError, apiFetch } from '@/lib/api/client';
import {
  type ComparisonSpec,
  comparisonSpecSchema,
  MODEL_NAMES,
  MODEL_TEXT,
  type ModelCurve,
  type ModelName,
  type PointsAnswer,
  pointsQueryOf,
  SERIES_BY,
  type SeriesBy,
  type XQuantity,
  type YQuantity,
} from '@/lib/comparison/spec';
import { CONVENTION_NAMES, CONVENTION_WORDS } from '@/reduction/intensity-conventions';
import { ChipFilter } from './chip-filter';
import { ComparisonFigure, type ModelLine } from './comparison-figure';
import { comparisonCsv, comparisonJson } from './export';
import { pngWithFont, svgWithFont } from './figure-font';
import { PhasePanel } from './phase-panel';
import { ResidualTable } from './residual-table';
import {
  buildSeries,
  figureSeries,
  modelParamsOf,
  modelRequests,
  residualTable,
  SERIES_BY_LABELS,
  toTotalFactor,
  xAxisLabel,
  xIsIntensity,
  Y_LABELS,
  yAxisLabel,
} from './series';

// TYPES //

interface Source {
  id: number;
  teamId: number;
  teamName: string;
  name: string;
  target: string;
  wavelengthNm: number;
  experimentKind: string;
  scans: { id: number; title: string | null; ellipticity: number | null; stepQuantity: string | null }[];
}

export interface SavedView {
  id: string;
  title: string;
  note: string | null;
  teamName: string;
  createdBy: { name: string } | null;
  hidden: { campaignIds: number[]; scanIds: number[] };
  canDelete: boolean;
}

const MODEL_WORDS: Record<ModelName, { label: string; line: string }> = {
  simple_man: { label: 'simple-man (zero offset)', line: 'dotted line' },
  trajectory: { label: 'Coulomb-corrected single trajectory', line: 'solid line' },
  ensemble: { label: 'Coulomb-corrected ensemble', line: 'thick line, computed in the background' },
  keldysh_rutherford: { label: 'Keldysh–Rutherford estimate', line: 'dashed line' },
};

const EMPTY_SPEC: ComparisonSpec = comparisonSpecSchema.parse({ selection: {} });

/** Log-spaced grid for the model lines (the models route takes at most 200 intensities). */
function grid(lo: number, hi: number): number[] {
  if (!(lo > 0) || !(hi > lo)) return [];
  const n = 24;
  return Array.from({ length: n }, (_, k) =>
    Number(Math.exp(Math.log(lo) + ((Math.log(hi) - Math.log(lo)) * k) / (n - 1)).toPrecision(8)),
  );
}

// MAIN //

export function ComparisonWorkbench({
  initialSpec,
  saved,
  saveTeams,
}: {
  initialSpec?: ComparisonSpec;
  saved?: SavedView;
  /** Teams where the viewer may save comparisons (PI); empty: no save form. */
  saveTeams: { teamId: number; teamName: string }[];
}) {
  const [spec, setSpec] = useState<ComparisonSpec>(initialSpec ?? EMPTY_SPEC);
  const [title, setTitle] = useState(saved?.title ?? '');
  const [saveTeam, setSaveTeam] = useState<number | null>(saveTeams[0]?.teamId ?? null);
  const [saveProblem, setSaveProblem] = useState<string | null>(null);
  const [saving, setSaving] = useState(false);
  const [confirmRemove, setConfirmRemove] = useState(false);
  const [exportProblem, setExportProblem] = useState<string | null>(null);
  const router = useRouter();
  const qc = useQueryClient();
  const figureBox = useRef<HTMLDivElement>(null);

  const sourcesQ = useQuery({
    queryKey: ['comparison', 'sources'],
    queryFn: () => apiFetch<{ campaigns: Source[] }>('/api/comparisons/sources'),
  });
  const query = pointsQueryOf(spec);
  delete query.calibrations; // applied in buildSeries, so that the other versions stay on offer
  const chosen = spec.selection.campaignIds.length + spec.selection.scanIds.length;
  const qs = new URLSearchParams(query).toString();
  const pointsQ = useQuery({
    queryKey: ['comparison', 'points', qs],
    queryFn: () => apiFetch<PointsAnswer>(`/api/comparisons/points?${qs}`),
    enabled: chosen > 0,
    retry: false,
  });
  const answer = pointsQ.data;
  const convention = answer?.convention ?? spec.convention ?? 'cycle_averaged_total';
  const built = useMemo(
    () => (answer ? buildSeries(answer.points, spec) : { series: [], left: { missing: 0, notPositive: 0 } }),
    [answer, spec],
  );
  const modelable = spec.axes.y === 'offset' || spec.axes.y === 'radius';
  const requests = useMemo(
    () => (spec.models.length && modelable ? modelRequests(built.series, spec.axes.x, convention, grid) : []),
    [built.series, spec.models, spec.axes.x, convention, modelable],
  );
  const modelQs = useQueries({
    queries: requests
      .filter((r) => r.intensities.length > 0)
      .map((r) => {
        const mq = new URLSearchParams({
          target: r.params.target,
          wavelengthNm: String(r.params.wavelengthNm),
          ellipticity: String(r.params.ellipticity),
          intensities: r.intensities.map(String).join(','),
          models: spec.models.join(','),
        }).toString();
        return {
          queryKey: ['comparison', 'models', mq],
          queryFn: () => apiFetch<{ curves: ModelCurve[] }>(`/api/comparisons/models?${mq}`),
          staleTime: Number.POSITIVE_INFINITY,
          // a run on the model queue (the ensemble) answers with its progress: ask again until it is done
          refetchInterval: (q: { state: { data?: { curves: ModelCurve[] } } }) =>
            q.state.data?.curves.some((c) => c.state === 'queued' || c.state === 'running') ? 2_000 : false,
          meta: r,
        };
      }),
  });
  const curves = new Map<string, ModelCurve[]>();
  const modelProblems: string[] = [];
  requests
    .filter((r) => r.intensities.length > 0)
    .forEach((r, i) => {
      const mq = modelQs[i];
      if (mq?.data) curves.set(r.params.key, mq.data.curves);
      if (mq?.error) modelProblems.push(mq.error.message);
    });
  const modelsLoading = modelQs.some((m) => m.isPending);
  const modelRuns = [...curves.values()]
    .flat()
    .filter((c) => (c.state === 'queued' || c.state === 'running') && c.progress);
  const modelLines: ModelLine[] = [];
  for (const r of requests) {
    const cs = curves.get(r.params.key) ?? [];
    const f = toTotalFactor(convention, r.params);
    if (f === null) continue;
    for (const c of cs) {
      const pts = c.points
        .map((p) => ({ x: p.intensityWcm2 / f, y: spec.axes.y === 'offset' ? p.offsetDeg : p.radiusAu }))
        .filter((p): p is { x: number; y: number } => p.y !== null && Number.isFinite(p.y));
      if (pts.length < 2 && c.model !== 'simple_man') continue;
      if (spec.axes.y === 'radius' && c.model === 'keldysh_rutherford') continue;
      // the colour of the one series these conditions belong to; grey when several series share them
      const owners = built.series
        .map((s, i) => (s.points.some((pp) => modelParamsOf(pp.point)?.key === r.params.key) ? i : -1))
        .filter((i) => i >= 0);
      modelLines.push({
        id: `${c.model}:${r.params.key}`,
        color: owners.length === 1 ? seriesStyle(owners[0]!).color : undefined,
        model: c.model,
        label: `${MODEL_WORDS[c.model].label} · ${r.params.target} ${r.params.wavelengthNm} nm ε ${r.params.ellipticity}`,
        points: pts,
      });
    }
  }
  const modelNotes = [
    ...new Set(
      [...curves.values()]
        .flat()
        .map((c) => c.note)
        .filter((n): n is string => !!n),
    ),
  ];
  // cheap (a few hundred points): recomputed on every render, so it follows the model answers as they arrive
  const residuals =
    spec.models.length && modelable ? residualTable(built.series, spec.models, curves, spec, convention) : [];
  const noModelReason = (() => {
    if (!spec.models.length || !answer) return null;
    if (!modelable)
      return `Models give the offset angle and the lobe radius only, not the ${Y_LABELS[spec.axes.y].name}.`;
    const pts = built.series.flatMap((s) => s.points);
    if (pts.length && !pts.some((pp) => xIsIntensity(spec.axes.x, pp.point)))
      return 'Models are drawn against an intensity axis; this x axis is not an intensity.';
    if (pts.length && !pts.some((pp) => modelParamsOf(pp.point)))
      return 'Models are drawn for elliptically polarised angular-streaking scans with a known ellipticity only.';
    return null;
  })();

  const update = (patch: Partial<ComparisonSpec>) => setSpec((s) => ({ ...s, ...patch }));
  const axes = (patch: Partial<ComparisonSpec['axes']>) => setSpec((s) => ({ ...s, axes: { ...s.axes, ...patch } }));
  const toggle = (list: number[], id: number) => (list.includes(id) ? list.filter((x) => x !== id) : [...list, id]);

  const sources = sourcesQ.data?.campaigns ?? [];
  const teams = [...new Map(sources.map((c) => [c.teamId, c.teamName])).entries()];
  const selectedSources = sources.filter(
    (c) => spec.selection.campaignIds.includes(c.id) || c.scans.some((s) => spec.selection.scanIds.includes(s.id)),
  );
  const targetsOffered = [...new Set(selectedSources.map((c) => c.target))].sort();
  const wavelengthsOffered = [...new Set(selectedSources.map((c) => c.wavelengthNm))].sort((a, b) => a - b);
  const ellipticitiesOffered = [
    ...new Set(
      selectedSources
        .flatMap((c) => c.scans)
        .map((s) => s.ellipticity)
        .filter((e): e is number => e !== null)
        .map((e) => Number(e.toFixed(3))),
    ),
  ].sort((a, b) => a - b);
  // versions seen in the answer, plus the ones already chosen (a chosen filter hides the others from the answer)
  const calibrationsSeen = new Map<number, string>();
  for (const p of answer?.points ?? []) {
    calibrationsSeen.set(p.provenance.calibrationId, `${p.campaignName} v${p.provenance.calibrationVersion ?? '?'}`);
  }
  for (const id of spec.filters.calibrationIds) if (!calibrationsSeen.has(id)) calibrationsSeen.set(id, `#${id}`);
  const calibrationsOffered = [...calibrationsSeen.entries()].map(([value, label]) => ({ value, label }));
  const xLabel = xAxisLabel(spec.axes.x, answer?.points ?? [], convention);
  const yLabel = yAxisLabel(spec.axes.y, convention);
  const figureTitle = title.trim() || saved?.title || '';
  const fileStem = (figureTitle || 'lobeline-comparison').replace(/[^A-Za-z0-9._-]+/g, '-').slice(0, 80);
  const address = saved
    ? `${typeof window === 'undefined' ? '' : window.location.origin}/comparisons/${saved.id}`
    : null;
  const exportMeta = {
    title: figureTitle || 'untitled comparison',
    convention,
    spec,
    conversions: answer?.conversions ?? [],
    address,
  };

  async function save() {
    setSaveProblem(null);
    if (!saveTeam) return;
    setSaving(true);
    try {
      const r = await apiFetch<{ comparison: { id: string } }>('/api/comparisons', {
        method: 'POST',
        json: { title, teamId: saveTeam, spec },
      });
      await qc.invalidateQueries({ queryKey: ['comparison', 'saved'] });
      router.push(`/comparisons/${r.comparison.id}`);
    } catch (err) {
      setSaveProblem(
        err instanceof ApiError ? [err.message, ...err.details].join(' ') : 'The comparison could not be saved.',
      );
    } finally {
      setSaving(false);
    }
  }
  async function remove() {
    if (!saved) return;
    await apiFetch(`/api/comparisons/${saved.id}`, { method: 'DELETE' });
    await qc.invalidateQueries({ queryKey: ['comparison', 'saved'] });
    router.push('/comparisons');
  }

  const hiddenCount = (saved?.hidden.campaignIds.length ?? 0) + (saved?.hidden.scanIds.length ?? 0);
  const select = compactInputClass();

  return (
    <div className="space-y-6" data-testid="comparison-workbench">
      <PageHeader
        eyebrow={saved ? `Saved comparison · ${saved.teamName}` : 'Comparison'}
        title={saved ? saved.title : 'Compare campaigns'}
        description={
          saved
            ? `Kept by ${saved.createdBy?.name ?? 'a former member'}. Everything below is drawn from the current results; changes here are not saved.`
            : 'Curves of several campaigns or scans in one figure, with simple models beside them and every number traceable to its result.'
        }
        actions={
          saved?.canDelete ? (
            <Button size="sm" variant="ghost" onClick={() => setConfirmRemove(true)}>
              Remove this saved comparison
            </Button>
          ) : null
        }
      />
      {confirmRemove && saved ? (
        <ConfirmDialog
          title="Remove this saved comparison?"
          confirmLabel="Remove it"
          tone="danger"
          onConfirm={() => void remove()}
          onCancel={() => setConfirmRemove(false)}
        >
          Its address stops working for every member of {saved.teamName}. The results it draws stay as they are.
        </ConfirmDialog>
      ) : null}
      {saved?.note ? <p className="-mt-4 max-w-3xl text-small text-ink-600">{saved.note}</p> : null}
      {hiddenCount ? (
        <div
          className="rounded-md border border-flare-200 bg-flare-50 px-4 py-3 text-small text-flare-800"
          data-testid="hidden-notice"
        >
          {hiddenCount === 1 ? 'One part' : `${hiddenCount} parts`} of this comparison{' '}
          {hiddenCount === 1 ? 'is' : 'are'} hidden from you:{' '}
          {[
            ...saved!.hidden.campaignIds.map((id) => `campaign #${id}`),
            ...saved!.hidden.scanIds.map((id) => `scan #${id}`),
          ].join(', ')}
          . They belong to a team whose results you do not read (any more); the rest is drawn without them.
        </div>
      ) : null}

      <Panel title="1 · What goes in" description="Whole campaigns, or single reduced scans of a campaign.">
        {sourcesQ.isPending ? (
          <LoadingBlock lines={3} />
        ) : sourcesQ.isError ? (
          <ErrorState message={sourcesQ.error.message} onRetry={() => sourcesQ.refetch()} />
        ) : !sources.length ? (
          <EmptyState title="No campaigns to compare">Campaigns of your teams appear here.</EmptyState>
        ) : (
          <div className="grid gap-4 md:grid-cols-2">
            {teams.map(([teamId, teamName]) => (
              <fieldset key={teamId} className="min-w-0 space-y-1.5">
                <legend className="mb-1 text-micro font-semibold tracking-wide text-lobe-700 uppercase">
                  {teamName}
                </legend>
                {sources
                  .filter((c) => c.teamId === teamId)
                  .map((c) => {
                    const on = spec.selection.campaignIds.includes(c.id);
                    return (
                      <div key={c.id} className="rounded-md ring-1 ring-ink-100">
                        <label className="flex cursor-pointer items-center gap-2 px-3 py-2">
                          <input
                            type="checkbox"
                            checked={on}
                            onChange={() =>
                              update({
                                selection: {
                                  ...spec.selection,
                                  campaignIds: toggle(spec.selection.campaignIds, c.id),
                                },
                              })
                            }
                            data-testid={`pick-campaign-${c.id}`}
                          />
                          <span className="min-w-0 flex-1 truncate text-small font-medium text-ink-900">{c.name}</span>
                          <span className="text-micro text-ink-500">
                            {c.scans.length} reduced scan{c.scans.length === 1 ? '' : 's'}
                          </span>
                        </label>
                        {c.scans.length && !on ? (
                          <details className="border-t border-ink-100 px-3 py-1.5 text-small">
                            <summary className="cursor-pointer text-micro text-ink-600">or single scans</summary>
                            <ul className="mt-1 space-y-0.5">
                              {c.scans.map((s) => (
                                <li key={s.id}>
                                  <label className="flex items-center gap-2">
                                    <input
                                      type="checkbox"
                                      checked={spec.selection.scanIds.includes(s.id)}
                                      onChange={() =>
                                        update({
                                          selection: {
                                            ...spec.selection,
                                            scanIds: toggle(spec.selection.scanIds, s.id),
                                          },
                                        })
                                      }
                                    />
                                    <span className="truncate">{s.title ?? `scan ${s.id}`}</span>
                                  </label>
                                </li>
                              ))}
                            </ul>
                          </details>
                        ) : null}
                      </div>
                    );
                  })}
              </fieldset>
            ))}
          </div>
        )}
      </Panel>

      <Panel title="2 · How to draw it">
        <div className="space-y-3 text-small text-ink-700">
          <p className="flex flex-wrap items-center gap-x-2 gap-y-2" data-testid="draw-sentence">
            Draw
            <select
              aria-label="quantity on the y axis"
              className={select}
              value={spec.axes.y}
              onChange={(e) => axes({ y: e.target.value as YQuantity })}
            >
              <option value="offset">the offset angle</option>
              <option value="shift">the transverse shift</option>
              <option value="radius">the lobe radius</option>
              <option value="radius_intensity">the intensity from the lobe radius</option>
            </select>
            against
            <select
              aria-label="quantity on the x axis"
              className={select}
              value={spec.axes.x}
              onChange={(e) => axes({ x: e.target.value as XQuantity })}
            >
              <option value="radius_intensity">the in-situ intensity (from the lobe radius)</option>
              <option value="step">the scanned value (stated intensity, …)</option>
            </select>
            , one series per
            <select
              aria-label="one series per"
              className={select}
              value={spec.seriesBy}
              onChange={(e) => update({ seriesBy: e.target.value as SeriesBy })}
            >
              {SERIES_BY.map((b) => (
                <option key={b} value={b}>
                  {SERIES_BY_LABELS[b]}
                </option>
              ))}
            </select>
            .
          </p>
          <div className="flex flex-wrap items-center gap-x-5 gap-y-2">
            {(['x', 'y'] as const).map((ax) => {
              const key = ax === 'x' ? 'xScale' : 'yScale';
              return (
                <span key={ax} className="inline-flex items-center gap-1.5">
                  {ax} axis
                  <span className="inline-flex overflow-hidden rounded-md ring-1 ring-ink-200">
                    {(['linear', 'log'] as const).map((v) => (
                      <button
                        key={v}
                        type="button"
                        aria-pressed={spec.axes[key] === v}
                        data-testid={`${ax}-scale-${v}`}
                        onClick={() => axes({ [key]: v })}
                        className={`px-2 py-0.5 text-micro font-medium ${spec.axes[key] === v ? 'bg-ink-800 text-white' : 'bg-white text-ink-700 hover:bg-ink-50'}`}
                      >
                        {v}
                      </button>
                    ))}
                  </span>
                </span>
              );
            })}
            <label className="inline-flex items-center gap-1.5">
              <input
                type="checkbox"
                checked={spec.errorBars}
                onChange={(e) => update({ errorBars: e.target.checked })}
              />
              statistical bars (1σ)
            </label>
            <label className="inline-flex items-center gap-1.5">
              <input
                type="checkbox"
                checked={spec.systematics}
                onChange={(e) => update({ systematics: e.target.checked })}
              />
              systematic boxes where reported
            </label>
          </div>
          <div className="flex flex-wrap items-center gap-x-5 gap-y-2">
            <label className="inline-flex max-w-full min-w-0 flex-wrap items-center gap-1.5">
              Intensities
              <select
                className={select}
                value={spec.convention ?? ''}
                onChange={(e) => update({ convention: (e.target.value || null) as ComparisonSpec['convention'] })}
                data-testid="convention"
              >
                <option value="">as stated (one convention only)</option>
                {CONVENTION_NAMES.map((c) => (
                  <option key={c} value={c}>
                    as {CONVENTION_WORDS[c]}
                  </option>
                ))}
              </select>
            </label>
            <label className="inline-flex max-w-full min-w-0 flex-wrap items-center gap-1.5">
              Flagged scans
              <select
                className={select}
                value={spec.filters.flagged}
                onChange={(e) =>
                  update({ filters: { ...spec.filters, flagged: e.target.value as 'include' | 'exclude' } })
                }
              >
                <option value="include">drawn hollow</option>
                <option value="exclude">left out</option>
              </select>
            </label>
            <ChipFilter
              label="Targets"
              testId="filter-targets"
              offered={targetsOffered.map((t) => ({ value: t, label: t }))}
              selected={spec.filters.targets}
              onChange={(targets) => update({ filters: { ...spec.filters, targets } })}
            />
            <ChipFilter
              label="Wavelengths"
              testId="filter-wavelengths"
              offered={wavelengthsOffered.map((v) => ({ value: v, label: `${v} nm` }))}
              selected={spec.filters.wavelengthsNm}
              onChange={(wavelengthsNm) => update({ filters: { ...spec.filters, wavelengthsNm } })}
            />
            <ChipFilter
              label="Ellipticities"
              testId="filter-ellipticities"
              offered={ellipticitiesOffered.map((v) => ({ value: v, label: `ε ${v}` }))}
              selected={spec.filters.ellipticities}
              onChange={(ellipticities) => update({ filters: { ...spec.filters, ellipticities } })}
            />
            <ChipFilter
              label="Calibration versions"
              testId="filter-calibrations"
              offered={calibrationsOffered}
              selected={spec.filters.calibrationIds}
              onChange={(calibrationIds) => update({ filters: { ...spec.filters, calibrationIds } })}
            />
          </div>
          <fieldset className="space-y-1.5" data-testid="model-choices">
            <legend className="mb-1 font-medium text-ink-800">Models beside the data (computed on the server)</legend>
            {MODEL_NAMES.map((m) => (
              <label key={m} className="flex items-start gap-2">
                <input
                  type="checkbox"
                  className="mt-1"
                  checked={spec.models.includes(m)}
                  onChange={() =>
                    update({
                      models: spec.models.includes(m) ? spec.models.filter((x) => x !== m) : [...spec.models, m],
                    })
                  }
                  data-testid={`model-${m}`}
                />
                <span>
                  <span className="font-medium text-ink-900">{MODEL_WORDS[m].label}</span>{' '}
                  <span className="text-ink-500">({MODEL_WORDS[m].line})</span>
                  <span className="block text-micro text-ink-500" data-testid={`assumptions-${m}`}>
                    {ASSUMPTIONS[m]}
                  </span>
                </span>
              </label>
            ))}
          </fieldset>
        </div>
      </Panel>

      <Panel
        title="3 · Figure"
        actions={
          built.series.length ? (
            <span className="inline-flex flex-wrap gap-2" data-testid="comparison-export">
              <Button
                size="sm"
                variant="secondary"
                onClick={() =>
                  downloadBlob(
                    new Blob([comparisonCsv(built.series, exportMeta)], { type: 'text/csv;charset=utf-8' }),
                    `${fileStem}.csv`,
                  )
                }
              >
                Numbers (CSV)
              </Button>
              <Button
                size="sm"
                variant="secondary"
                onClick={() =>
                  downloadBlob(
                    new Blob(
                      [
                        comparisonJson(
                          built.series,
                          exportMeta,
                          [...curves.entries()].map(([key, cs]) => ({ key, curves: cs })),
                          residuals,
                        ),
                      ],
                      { type: 'application/json' },
                    ),
                    `${fileStem}.json`,
                  )
                }
              >
                Numbers (JSON)
              </Button>
              <Button
                size="sm"
                variant="secondary"
                onClick={() => {
                  const svg = figureBox.current?.querySelector('svg') as SVGSVGElement | null;
                  if (!svg) return;
                  // the shipped font goes into the file (a data: URL), so that it looks the same everywhere
                  svgWithFont(svg).then(
                    (text) => downloadBlob(new Blob([text], { type: 'image/svg+xml' }), `${fileStem}.svg`),
                    () =>
                      setExportProblem('The font could not be put into the SVG; try again after reloading the page.'),
                  );
                }}
              >
                Figure (SVG)
              </Button>
              <Button
                size="sm"
                variant="secondary"
                onClick={() => {
                  const svg = figureBox.current?.querySelector('svg') as SVGSVGElement | null;
                  if (!svg) return;
                  // 3 × the drawing's width: about 2300 px, 300 dpi over a 19 cm wide figure
                  pngWithFont(svg, 3).then(
                    (blob) => downloadBlob(blob, `${fileStem}.png`),
                    () => setExportProblem('The PNG could not be made in this browser; the SVG has the same figure.'),
                  );
                }}
              >
                Figure (PNG)
              </Button>
            </span>
          ) : null
        }
      >
        {chosen === 0 ? (
          <EmptyState title="Nothing chosen yet">Tick one or more campaigns or scans above.</EmptyState>
        ) : pointsQ.isPending ? (
          <LoadingBlock lines={6} />
        ) : pointsQ.isError ? (
          <div className="space-y-2">
            <ErrorState
              title="These cannot be drawn together yet"
              message={pointsQ.error.message}
              details={pointsQ.error instanceof ApiError ? pointsQ.error.details : undefined}
            />
            {pointsQ.error instanceof ApiError && pointsQ.error.status === 409 && !spec.convention ? (
              <Button size="sm" variant="secondary" onClick={() => update({ convention: 'cycle_averaged_total' })}>
                Convert every intensity to the cycle-averaged total
              </Button>
            ) : null}
          </div>
        ) : !built.series.length ? (
          answer?.phaseCurves?.length ? (
            <EmptyState title="Only phase-delay curves here">
              The chosen scans are two-colour phase scans: their yield against the relative phase is drawn below.
            </EmptyState>
          ) : (
            <EmptyState title="No points to draw">
              None of the chosen scans has this quantity on both axes
              {spec.filters.targets.length ? ' with these targets' : ''}.
            </EmptyState>
          )
        ) : (
          <div className="space-y-3">
            <div ref={figureBox}>
              <ComparisonFigure
                series={figureSeries(built.series)}
                models={modelLines}
                xLabel={xLabel}
                yLabel={yLabel}
                xScale={spec.axes.xScale}
                yScale={spec.axes.yScale}
                errorBars={spec.errorBars}
                systematics={spec.systematics}
                title={figureTitle || undefined}
              />
            </div>
            {exportProblem ? (
              <p className="text-micro text-fault-700" role="status">
                {exportProblem}
              </p>
            ) : null}
            <ul className="space-y-0.5 text-micro text-ink-600" data-testid="figure-notes">
              <li>
                {built.series.reduce((n, s) => n + s.points.length, 0)} points in {built.series.length} series; one
                marker per step of each scan&apos;s current result; hollow markers are flagged scans.
              </li>
              {answer?.conversions.map((c) => (
                <li key={c} className="text-flare-800">
                  {c}
                </li>
              ))}
              {built.left.missing ? (
                <li>{built.left.missing} steps have no value on one of the axes and are not drawn.</li>
              ) : null}
              {built.left.notPositive ? (
                <li>{built.left.notPositive} values are zero or negative and are not drawn on the log axis.</li>
              ) : null}
              {answer?.truncated ? <li className="text-flare-800">Only the first 20 000 steps are drawn.</li> : null}
              {spec.models.length && modelsLoading ? <li>Computing the models…</li> : null}
              {modelRuns.map((c) => (
                <li
                  key={`run-${c.model}-${c.points[0]?.intensityWcm2 ?? 0}-${c.progress!.total}`}
                  data-testid="model-progress"
                >
                  {MODEL_WORDS[c.model].label}: {c.state === 'queued' ? 'waiting for a worker' : 'running'},{' '}
                  {c.progress!.done.toLocaleString('en')} of {c.progress!.total.toLocaleString('en')} trajectories
                  <progress
                    className="ml-2 inline-block h-2 w-32 align-middle"
                    max={c.progress!.total || 1}
                    value={c.progress!.done}
                  />
                </li>
              ))}
              {noModelReason ? <li className="text-flare-800">{noModelReason}</li> : null}
              {modelNotes.map((n) => (
                <li key={n}>{n}</li>
              ))}
              {modelProblems.map((n) => (
                <li key={n} className="text-fault-700">
                  {n}
                </li>
              ))}
              {spec.models
                .filter(() => modelLines.length)
                .map((m) => (
                  <li key={m}>
                    <span className="font-medium">{MODEL_WORDS[m].label}:</span> {ASSUMPTIONS[m]}
                  </li>
                ))}
            </ul>
          </div>
        )}
      </Panel>

      {answer?.phaseCurves?.length ? <PhasePanel curves={answer.phaseCurves} fileStem={fileStem} /> : null}

      {residuals.length ? (
        <Panel
          title="Data minus model"
          description="The mean difference in the drawn quantity’s unit, then in units of each point’s statistical error (the ensemble’s own fit σ added in quadrature); the last column also adds the systematic error where one is reported."
          flush
        >
          <ResidualTable rows={residuals} labels={MODEL_WORDS} unit={Y_LABELS[spec.axes.y].unit} />
        </Panel>
      ) : null}

      {saveTeams.length ? (
        <Panel title={saved ? 'Keep a copy' : 'Keep this comparison'} data-testid="save-panel">
          <form
            className="flex flex-wrap items-end gap-3"
            onSubmit={(e) => {
              e.preventDefault();
              void save();
            }}
          >
            <label className="min-w-64 flex-1 space-y-1 text-small font-medium text-ink-800">
              <span className="block">Title</span>
              <input
                className={inputClass(!!saveProblem)}
                value={title}
                maxLength={160}
                onChange={(e) => setTitle(e.target.value)}
                placeholder="e.g. Neon offsets at 800 nm, this year and last"
                name="title"
              />
            </label>
            <label className="space-y-1 text-small font-medium text-ink-800">
              <span className="block">Members who may open it</span>
              <select
                className={inputClass()}
                value={saveTeam ?? ''}
                onChange={(e) => setSaveTeam(Number(e.target.value))}
              >
                {saveTeams.map((t) => (
                  <option key={t.teamId} value={t.teamId}>
                    {t.teamName}
                  </option>
                ))}
              </select>
            </label>
            <Button type="submit" isLoading={saving} disabled={!title.trim() || chosen === 0}>
              Save under a fixed address
            </Button>
          </form>
          {saveProblem ? (
            <p className="mt-2 text-small text-fault-700" role="alert">
              {saveProblem}
            </p>
          ) : null}
          <p className="mt-2 text-micro text-ink-500">
            The address keeps the choice, filters and axes; every opening draws today&apos;s current results and checks
            again what the viewer may read.
          </p>
        </Panel>
      ) : (
        <p className="text-micro text-ink-500">Only a PI of a team keeps comparisons for its members.</p>
      )}
      {saved ? (
        <p className="text-micro text-ink-500">
          <Badge tone="info">address</Badge> <span data-testid="saved-address">{address}</span>
        </p>
      ) : null}
    </div>
  );
}

const ASSUMPTIONS: Record<ModelName, string> = {
  simple_man: MODEL_TEXT.simple_man.assumptions,
  trajectory: MODEL_TEXT.trajectory.assumptions,
  ensemble: MODEL_TEXT.ensemble.assumptions,
  keldysh_rutherford: MODEL_TEXT.keldysh_rutherford.assumptions,
};
