'use client';
// The scan page: state, file and conditions; the latest (or a chosen) result with the momentum image, angular
// distribution with fit, radial and energy spectra, per-step table; phase maps for two-colour scans; downloads.
import { useQuery } from '@tanstack/react-query';
import Link from 'next/link';
import { useEffect, useState } from 'react';
import { HelicitySystematic } from '@/components/campaign/helicity-panel';
import { overridePhrases } from '@/components/ingest/release-fields';
import { formatNumber } from '@/components/plots/scales';
import { XYPlot } from '@/components/plots/xy-plot';
import { EmptyState, ErrorState, LinkButton, LoadingBlock, PageHeader, Panel } from '@/components/ui';
import { apiFetch } from '@/lib/api/client';
import { formatBytes, formatDateTime } from '@/lib/format';
import { ArchivedNotice } from './archived-notice';
import { DistributionsPanel } from './distributions-panel';
import { FlagControl } from './flag-control';
import { EXPERIMENT_LABELS, phaseText, regionLabel, stepAxisLabel, valueWithError } from './format';
import { viewsFor } from './kind-views';
import { MomentumPanel } from './momentum-panel';
import { PhasePanel } from './phase-panel';
import { ReduceAgain } from './reduce-again';
import { ScanStatusBadge } from './status-badge';
import { StepTable } from './step-table';
import type { ResultResponse, ScanResponse } from './types';

const DOWNLOAD_PROBLEMS = {
  missing:
    'The result file of this result is not in storage any more, so it could not be downloaded. Reduce the scan again to rebuild it, or tell the data steward.',
  unavailable: 'The storage service did not answer, so the result file could not be downloaded. Try again in a minute.',
} as const;

/** “1 234 567 events” for an event file (FORMATS §1.1; metadata of reduction/hdf5/event-reader.ts), else null. */
function eventCountWords(metadata: unknown): string | null {
  const count = (metadata as { events?: { count?: unknown } } | null)?.events?.count;
  return typeof count === 'number' ? `${count.toString().replace(/\B(?=(\d{3})+(?!\d))/g, '\u2009')} events` : null;
}

export function ScanView({
  scanId,
  downloadProblem = null,
}: {
  scanId: number;
  downloadProblem?: keyof typeof DOWNLOAD_PROBLEMS | null;
}) {
  const scanQ = useQuery({
    queryKey: ['scan', scanId],
    queryFn: () => apiFetch<ScanResponse>(`/api/scans/${scanId}`),
    refetchInterval: (q) => {
      const s = q.state.data?.scan.status;
      const open = q.state.data?.jobs.some((j) => j.status === 'queued' || j.status === 'running');
      const a = q.state.data?.scan.rawFileArchiveState;
      const moving = a === 'archiving' || a === 'restoring';
      return s === 'queued' || s === 'reducing' || s === 'uploaded' || open || moving ? 1500 : false;
    },
  });
  const [resultId, setResultId] = useState<number | null>(null);
  const [step, setStep] = useState(0);
  const latest = scanQ.data?.scan.latestResultId ?? null;
  const shownId = resultId ?? latest;
  const resultQ = useQuery({
    queryKey: ['scan-result', scanId, shownId],
    enabled: shownId != null && !!scanQ.data?.can.viewResults,
    queryFn: () => apiFetch<ResultResponse>(`/api/scans/${scanId}/result?resultId=${shownId}`),
    staleTime: Number.POSITIVE_INFINITY,
  });
  const result = resultQ.data?.result;
  useEffect(() => {
    if (result && step >= result.steps.length) setStep(0);
  }, [result, step]);

  if (scanQ.isPending) return <LoadingBlock lines={10} />;
  if (scanQ.isError) return <ErrorState message={scanQ.error.message} onRetry={() => scanQ.refetch()} />;
  const { scan, results, jobs, can } = scanQ.data;
  const openJob = jobs.find((j) => j.status === 'queued' || j.status === 'running');
  const stepResult = result?.steps[step] ?? null;
  const kind = result?.input.experiment_kind ?? scan.experimentKind ?? '';
  const views = viewsFor(kind);
  // A quarantined file is not reduced until an analyst releases it on the shift page; the reduce route refuses it.
  const quarantined = scan.status === 'quarantined';

  return (
    <div className="space-y-6">
      <PageHeader
        eyebrow={
          <Link href={`/campaigns/${scan.campaignId}`} className="hover:underline">
            {scan.campaignName}
          </Link>
        }
        title={
          <span className="inline-flex flex-wrap items-center gap-3">
            {scan.title || scan.fileName || `Scan ${scan.id}`}
            <ScanStatusBadge status={scan.status} />
          </span>
        }
        description={[
          EXPERIMENT_LABELS[scan.experimentKind ?? ''] ?? scan.experimentKind,
          scan.target,
          scan.wavelengthNm ? `${scan.wavelengthNm} nm` : null,
          scan.ellipticity != null ? `ε = ${scan.ellipticity}` : null,
          scan.helicity != null ? `helicity ${scan.helicity > 0 ? '+1' : '−1'}` : null,
          scan.nSteps
            ? `${scan.nSteps} step${scan.nSteps === 1 ? '' : 's'} of ${stepAxisLabel(scan.stepQuantity, null).toLowerCase()}`
            : null,
          scan.nX && scan.nY ? `${scan.nX} × ${scan.nY} px` : null,
          eventCountWords(scan.metadata),
        ]
          .filter(Boolean)
          .join(' · ')}
        actions={
          can.viewResults && !quarantined && !eventCountWords(scan.metadata) ? (
            <LinkButton variant="secondary" size="sm" href={`/scans/${scan.id}/bench`} data-testid="open-bench">
              Calibration bench
            </LinkButton>
          ) : null
        }
      />

      {scan.status === 'failed' ||
      (scan.statusMessage &&
        scan.status !== 'reducing' &&
        !(scan.status === 'reduced' && /^Reduced with/.test(scan.statusMessage))) ? (
        <div
          role="status"
          data-testid="scan-status-message"
          className={`rounded-md border px-4 py-3 text-small whitespace-pre-wrap ${
            scan.status === 'failed'
              ? 'border-fault-100 bg-fault-50 text-fault-700'
              : 'border-flare-200 bg-flare-50 text-flare-900'
          }`}
        >
          {scan.status === 'failed' ? <p className="mb-1 font-semibold">The reduction failed</p> : null}
          {scan.statusMessage}
        </div>
      ) : null}

      {scan.rawFileId && scan.rawFileArchiveState && scan.rawFileArchiveState !== 'online' ? (
        <ArchivedNotice
          scanId={scan.id}
          rawFileId={scan.rawFileId}
          state={scan.rawFileArchiveState}
          canRestore={!!can.restore}
        />
      ) : null}

      {downloadProblem ? (
        <div
          role="alert"
          data-testid="download-problem"
          className="rounded-md border border-fault-100 bg-fault-50 px-4 py-3 text-small text-fault-700"
        >
          {DOWNLOAD_PROBLEMS[downloadProblem]}
        </div>
      ) : null}

      {openJob ? (
        <Panel>
          <div className="flex items-center gap-4" data-testid="job-progress">
            <span className="text-small text-ink-700">
              {openJob.status === 'running' ? 'Reducing' : 'Waiting for a worker'} · attempt{' '}
              {Math.max(1, openJob.attempts)}
              {openJob.chunksTotal != null ? (
                <span data-testid="job-chunks">
                  {' '}
                  · {openJob.chunksDone ?? 0} of {openJob.chunksTotal} event chunks counted
                </span>
              ) : null}
            </span>
            <div
              className="h-2 flex-1 overflow-hidden rounded-full bg-ink-100"
              role="progressbar"
              aria-valuenow={Math.round(openJob.progress * 100)}
              aria-valuemin={0}
              aria-valuemax={100}
            >
              <div
                className="h-full bg-lobe-500 transition-all"
                style={{ width: `${Math.round(openJob.progress * 100)}%` }}
              />
            </div>
            <span className="w-12 text-right font-mono text-small text-ink-700">
              {Math.round(openJob.progress * 100)} %
            </span>
          </div>
        </Panel>
      ) : null}

      <div className="grid gap-6 lg:grid-cols-3">
        <Panel title="Result" className="lg:col-span-2" data-testid="result-panel">
          {!can.viewResults ? (
            <p className="text-small text-ink-600">Your role shows this scan&apos;s metadata only.</p>
          ) : shownId == null ? (
            <EmptyState title="No result yet">
              {scan.status === 'failed'
                ? 'See the reason above.'
                : quarantined
                  ? 'This file is quarantined: it is not reduced until an analyst releases it on the shift page.'
                  : results.some((r) => r.trial)
                    ? 'No result with approved versions yet; the trial results are listed below.'
                    : scan.status === 'uploaded' && !openJob
                      ? 'Not queued yet: the campaign needs an approved calibration and settings pair.'
                      : 'The result appears here when the worker is done.'}
            </EmptyState>
          ) : resultQ.isPending ? (
            <LoadingBlock lines={3} />
          ) : resultQ.isError ? (
            <ErrorState message={resultQ.error.message} onRetry={() => resultQ.refetch()} />
          ) : result ? (
            <div className="space-y-3">
              <div className="flex flex-wrap items-baseline gap-x-8 gap-y-2">
                {views.lobeFigures && result.steps.some((st) => st.offset_deg != null) ? (
                  <div>
                    <p className="text-micro tracking-wide text-ink-500 uppercase">
                      Offset angle (weighted over steps)
                    </p>
                    <p className="font-mono text-title text-ink-900" data-testid="headline-offset">
                      {valueWithError(
                        results.find((r) => r.id === shownId)?.offsetDeg ?? null,
                        results.find((r) => r.id === shownId)?.offsetErrDeg ?? null,
                        '°',
                      )}
                    </p>
                  </div>
                ) : result.phase?.regions.length ? (
                  <div data-testid="headline-phase">
                    <p className="text-micro tracking-wide text-ink-500 uppercase">Phase of maximum yield by region</p>
                    <p className="font-mono text-small text-ink-900">
                      {result.phase.regions
                        .map((r) => `${regionLabel(r.name)}: ${phaseText(r.phase_of_max_rad, r.contrast)}`)
                        .join(' · ')}
                    </p>
                  </div>
                ) : (
                  <p className="text-small text-ink-600">This kind of scan has no offset angle.</p>
                )}
                {views.lobeFigures ? (
                  <HelicitySystematic
                    campaignId={scan.campaignId}
                    scanId={scanId}
                    stepIndex={step}
                    enabled={shownId === latest && !results.find((r) => r.id === shownId)?.trial}
                  />
                ) : null}
                <div className="text-small text-ink-600">
                  calibration v{resultQ.data.calibrationVersion} · settings v{resultQ.data.settingsVersion}
                  <br />
                  {formatDateTime(resultQ.data.createdAt)} · lobeline {result.software.version}
                  {result.input.overrides ? (
                    <>
                      <br />
                      <span data-testid="result-overrides">
                        Corrected at release: {overridePhrases(result.input.overrides).join(' · ')}
                      </span>
                    </>
                  ) : null}
                </div>
              </div>
              {results.find((r) => r.id === shownId)?.trial ? (
                <p
                  className="rounded-md border border-flare-200 bg-flare-50 px-3 py-2 text-small text-flare-900"
                  data-testid="trial-result-banner"
                >
                  Trial result: calibration v{resultQ.data.calibrationVersion} / settings v
                  {resultQ.data.settingsVersion} includes a version that was never approved. It is not this scan&apos;s
                  result and is not in the campaign trend.
                </p>
              ) : null}
              {results.filter((r) => !r.trial).length > 1 ? (
                <label className="block text-micro text-ink-600">
                  Result shown
                  <select
                    className="ml-2 rounded border border-ink-200 px-2 py-1 text-small"
                    value={results.find((r) => r.id === shownId && !r.trial) ? shownId : ''}
                    onChange={(e) => setResultId(Number(e.target.value))}
                  >
                    {results.find((r) => r.id === shownId && !r.trial) ? null : (
                      <option value="">a trial result</option>
                    )}
                    {results
                      .filter((r) => !r.trial)
                      .map((r) => (
                        <option key={r.id} value={r.id}>
                          cal v{r.calibrationVersion} / set v{r.settingsVersion} ·{' '}
                          {valueWithError(r.offsetDeg, r.offsetErrDeg, '°')}
                          {r.isLatest ? ' (current)' : ''}
                        </option>
                      ))}
                  </select>
                </label>
              ) : null}
              {result.warnings.length ? (
                <ul className="list-disc space-y-0.5 pl-5 text-small text-flare-800" data-testid="result-warnings">
                  {result.warnings.map((w) => (
                    <li key={w}>{w}</li>
                  ))}
                </ul>
              ) : null}
              {views.lobeFigures && result.steps.length > 1 && result.steps.some((st) => st.offset_deg != null) ? (
                <XYPlot
                  data-testid="offset-per-step"
                  height={200}
                  xLabel={stepAxisLabel(result.input.step_quantity, result.input.step_units)}
                  yLabel="offset (deg)"
                  series={[
                    {
                      id: 'offset',
                      label: 'offset',
                      color: '#0f8077',
                      mode: 'points',
                      points: result.steps.map((st) => ({
                        x: st.value,
                        y: st.offset_deg ?? Number.NaN,
                        yErr: st.offset_err_deg,
                      })),
                    },
                  ]}
                />
              ) : null}
              <div className="flex flex-wrap gap-2 pt-1">
                <a
                  className="text-small font-medium text-lobe-700 hover:underline"
                  href={`/api/scans/${scanId}/download/json?resultId=${shownId}`}
                >
                  Result JSON
                </a>
                <span className="text-ink-300">·</span>
                <a
                  className="text-small font-medium text-lobe-700 hover:underline"
                  href={`/api/scans/${scanId}/download/csv?resultId=${shownId}`}
                >
                  Per-step table (CSV)
                </a>
                {resultQ.data.hasResultFile ? (
                  <>
                    <span className="text-ink-300">·</span>
                    <a
                      className="text-small font-medium text-lobe-700 hover:underline"
                      href={`/api/scans/${scanId}/download/h5?resultId=${shownId}`}
                    >
                      Result file (HDF5, NeXus)
                    </a>
                  </>
                ) : null}
              </div>
            </div>
          ) : null}
          {can.viewResults && results.some((r) => r.trial) ? (
            <div className="mt-4 border-t border-ink-100 pt-3" data-testid="trial-results">
              <p className="text-small font-medium text-ink-800">Trial results (versions not approved)</p>
              <p className="text-micro text-ink-500">
                Kept apart: they are never the scan&apos;s result and never in the campaign trend.
              </p>
              <ul className="mt-1 space-y-1">
                {results
                  .filter((r) => r.trial)
                  .map((r) => (
                    <li key={r.id} className="flex flex-wrap items-center gap-2 text-small">
                      <span className="rounded bg-flare-100 px-1.5 py-0.5 text-micro font-semibold text-flare-900">
                        trial
                      </span>
                      calibration v{r.calibrationVersion} / settings v{r.settingsVersion} ·{' '}
                      {valueWithError(r.offsetDeg, r.offsetErrDeg, '°')}
                      {r.id === shownId ? (
                        <span className="text-ink-500">(shown)</span>
                      ) : (
                        <button
                          type="button"
                          className="text-lobe-700 hover:underline"
                          onClick={() => setResultId(r.id)}
                        >
                          Show
                        </button>
                      )}
                    </li>
                  ))}
              </ul>
            </div>
          ) : null}
        </Panel>
        <Panel title="File">
          <dl className="grid grid-cols-[auto_1fr] gap-x-3 gap-y-1 text-small">
            <dt className="text-ink-500">Name</dt>
            <dd className="break-all text-ink-800">{scan.fileName ?? '—'}</dd>
            <dt className="text-ink-500">Size</dt>
            <dd>{formatBytes(scan.sizeBytes)}</dd>
            <dt className="text-ink-500">SHA-256</dt>
            <dd className="font-mono text-micro break-all">{scan.sha256 ?? '—'}</dd>
            <dt className="text-ink-500">Shift</dt>
            <dd>
              {scan.shiftTitle ? (
                <Link className="text-lobe-700 hover:underline" href={`/shifts/${scan.shiftId}`}>
                  {scan.shiftTitle}
                </Link>
              ) : (
                '—'
              )}
            </dd>
            <dt className="text-ink-500">Recorded</dt>
            <dd>{formatDateTime(scan.startedAt)}</dd>
            <dt className="text-ink-500">Uploaded</dt>
            <dd>{formatDateTime(scan.uploadedAt)}</dd>
          </dl>
          {scan.flagged || can.flag ? (
            <div className="mt-4 border-t border-ink-100 pt-3">
              <FlagControl
                scanId={scanId}
                campaignId={scan.campaignId}
                flagged={scan.flagged}
                flagNote={scan.flagNote}
                canFlag={can.flag}
              />
            </div>
          ) : null}
          {can.startReduction ? (
            <div className="mt-4 border-t border-ink-100 pt-3">
              {quarantined ? (
                <p className="text-small text-ink-600" data-testid="reduce-quarantined">
                  Quarantined files are reduced once released.{' '}
                  {scan.shiftId ? (
                    <Link className="text-lobe-700 hover:underline" href={`/shifts/${scan.shiftId}`}>
                      Review it on the shift page
                    </Link>
                  ) : null}
                </p>
              ) : (
                <ReduceAgain scanId={scanId} campaignId={scan.campaignId} jobs={jobs} />
              )}
            </div>
          ) : null}
        </Panel>
      </div>

      {result && shownId != null ? (
        <>
          {result.steps.length > 1 ? (
            <div className="flex flex-wrap items-center gap-3" data-testid="step-selector">
              <label htmlFor="step-range" className="text-small font-medium text-ink-800">
                Step {step} ({step + 1} of {result.steps.length})
              </label>
              <input
                id="step-range"
                type="range"
                min={0}
                max={result.steps.length - 1}
                value={step}
                onChange={(e) => setStep(Number(e.target.value))}
                className="w-64 accent-lobe-600"
              />
              <span className="text-small text-ink-600">
                {stepAxisLabel(result.input.step_quantity, result.input.step_units)} ={' '}
                {formatNumber(stepResult?.value, 4)}
                {views.lobeFigures && stepResult?.offset_deg != null
                  ? ` · offset ${valueWithError(stepResult.offset_deg, stepResult.offset_err_deg, '°')}`
                  : ''}
              </span>
            </div>
          ) : null}
          <div className="grid gap-6 xl:grid-cols-[minmax(0,540px)_1fr]">
            <Panel
              title="Momentum image"
              description="Calibrated counts on the lab momentum grid (p_z integrated), step shown above."
            >
              <MomentumPanel scanId={scanId} resultId={shownId} step={stepResult} kind={kind} />
            </Panel>
            <Panel title="Distributions">
              {stepResult ? (
                <DistributionsPanel
                  scanId={scanId}
                  resultId={shownId}
                  step={stepResult}
                  settings={result.settings}
                  kind={kind}
                />
              ) : null}
            </Panel>
          </div>
          <Panel title="Steps" flush>
            <div className="px-2 py-2">
              <StepTable result={result} selected={step} onSelect={setStep} />
            </div>
          </Panel>
          {views.phaseMaps ? (
            <Panel title="Phase maps" description="Per-cell analysis of the yield against the relative ω–2ω phase.">
              <PhasePanel scanId={scanId} resultId={shownId} result={result} />
            </Panel>
          ) : null}
        </>
      ) : null}

      {jobs.length ? (
        <Panel title="Reduction history" flush>
          <ul className="divide-y divide-ink-100 text-small">
            {jobs.map((j) => (
              <li key={j.id} className="flex flex-wrap gap-x-4 px-5 py-2">
                <span className="w-24 font-medium text-ink-800">{j.status}</span>
                <span className="text-ink-600">{formatDateTime(j.createdAt)}</span>
                <span className="text-ink-600">attempts {j.attempts}</span>
                {j.errorMessage ? (
                  <span className="w-full whitespace-pre-wrap text-fault-700">{j.errorMessage}</span>
                ) : null}
              </li>
            ))}
          </ul>
        </Panel>
      ) : null}
    </div>
  );
}
