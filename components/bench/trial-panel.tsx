'use client';
// Save the bench's calibration (and settings) as new draft versions, see what they would change on the campaign,
// and — for the PI — approve them, which re-reduces the campaign as one batch.
//
// The trial runs in a web worker of its own in this browser: every step of every scan with a current result is
// read raw and reduced at full resolution with the bench's calibration and settings. Its numbers are kept in this
// page only: nothing is stored, so a trial can never become a scan's result. Before = the scan's current result.
import { useQuery, useQueryClient } from '@tanstack/react-query';
import Link from 'next/link';
import { useEffect, useRef, useState } from 'react';
import { BatchesPanel } from '@/components/campaign/batches-panel';
import { campaignKeys } from '@/components/campaign/query-keys';
import type { CampaignResponse, ScanPage } from '@/components/campaign/types';
import { formatNumber } from '@/components/plots/scales';
import type { ResultResponse } from '@/components/scans/types';
import { Badge, Button, ErrorState, Panel } from '@/components/ui';
import { inputClass } from '@/components/ui/input-class';
import { apiFetch } from '@/lib/api/client';
import type { VersionDto } from '@/lib/db/queries/calibrations';
import type { AnalysisSettings, DetectorCalibration } from '@/reduction/formats';
import { largestPull, type QuantityChange, type StepChange, stepChange } from './trial';
import { createTrialRunner } from './use-bench-worker';
import { decodeFrame, type RawFrameResponse } from './wire';

interface TrialRow {
  scanId: number;
  title: string;
  change: StepChange | null;
  problem: string | null;
}

function Change({ c, digits, unit, testId }: { c: QuantityChange; digits: number; unit: string; testId?: string }) {
  const pull = c.inSigma;
  const tone =
    pull === null
      ? 'text-ink-500'
      : Math.abs(pull) >= 3
        ? 'text-fault-700 font-semibold'
        : Math.abs(pull) >= 1
          ? 'text-flare-900'
          : 'text-ink-700';
  return (
    <td className="py-1 pr-3 align-top" data-testid={testId}>
      <span className="font-mono">
        {formatNumber(c.before, digits)} → {formatNumber(c.after, digits)}
        {unit}
      </span>
      <span className={`block text-micro ${tone}`}>
        {c.delta === null ? '—' : `${c.delta >= 0 ? '+' : ''}${formatNumber(c.delta, 2)}${unit}`}
        {pull === null ? '' : ` (${pull >= 0 ? '+' : ''}${formatNumber(pull, 2)} σ)`}
      </span>
    </td>
  );
}

export function TrialPanel({
  scanId,
  campaign,
  calibration,
  settings,
  changedCal,
  changedSet,
  baseCal,
  baseSet,
}: {
  scanId: number;
  campaign: CampaignResponse;
  calibration: DetectorCalibration;
  settings: AnalysisSettings;
  changedCal: boolean;
  changedSet: boolean;
  baseCal: VersionDto | null;
  baseSet: VersionDto | null;
}) {
  const qc = useQueryClient();
  const c = campaign.campaign;
  const can = campaign.can;
  const [note, setNote] = useState('');
  const [saving, setSaving] = useState(false);
  const [saveError, setSaveError] = useState<string | null>(null);
  const [saved, setSaved] = useState<{ calibration: VersionDto | null; settings: VersionDto | null } | null>(null);
  const [rows, setRows] = useState<TrialRow[]>([]);
  const [progress, setProgress] = useState<{ done: number; total: number } | null>(null);
  const [trialError, setTrialError] = useState<string | null>(null);
  const [trialOf, setTrialOf] = useState<string | null>(null);
  const runner = useRef<ReturnType<typeof createTrialRunner> | null>(null);
  const [approving, setApproving] = useState(false);
  const [approveError, setApproveError] = useState<string | null>(null);
  const [batch, setBatch] = useState<{ batchId: number; total: number; queued: number } | null>(null);
  const [approvedLabel, setApprovedLabel] = useState<string | null>(null);

  useEffect(() => () => runner.current?.close(), []);

  // the versions a PI may approve here: just saved, or the drafts the bench was opened with
  const calDraft = saved?.calibration ?? (baseCal && !baseCal.isCurrent && baseCal.status === 'draft' ? baseCal : null);
  const setDraft = saved?.settings ?? (baseSet && !baseSet.isCurrent && baseSet.status === 'draft' ? baseSet : null);
  // what the last save stored: the bench counts as unchanged again until the analyst moves something
  const [savedAs, setSavedAs] = useState<{ cal: string | null; set: string | null }>({ cal: null, set: null });
  const calNow = JSON.stringify(calibration);
  const setNow = JSON.stringify(settings);
  const calChanged = changedCal && calNow !== savedAs.cal;
  const setChanged = changedSet && setNow !== savedAs.set;
  const unsaved = calChanged || setChanged;

  async function save() {
    setSaving(true);
    setSaveError(null);
    try {
      const out: { calibration: VersionDto | null; settings: VersionDto | null } = {
        calibration: null,
        settings: null,
      };
      if (calChanged) {
        out.calibration = (
          await apiFetch<{ version: VersionDto }>(`/api/campaigns/${c.id}/calibrations`, {
            method: 'POST',
            json: { body: calibration, note: note || 'Found on the calibration bench.' },
          })
        ).version;
      }
      if (setChanged) {
        out.settings = (
          await apiFetch<{ version: VersionDto }>(`/api/campaigns/${c.id}/settings`, {
            method: 'POST',
            json: { body: settings, note: note || 'Found on the calibration bench.' },
          })
        ).version;
      }
      setSaved((prev) => ({
        calibration: out.calibration ?? prev?.calibration ?? null,
        settings: out.settings ?? prev?.settings ?? null,
      }));
      setSavedAs((prev) => ({ cal: out.calibration ? calNow : prev.cal, set: out.settings ? setNow : prev.set }));
      qc.invalidateQueries({ queryKey: ['versions', c.id] });
    } catch (err) {
      setSaveError((err as Error).message);
    } finally {
      setSaving(false);
    }
  }

  async function runTrial() {
    runner.current?.close();
    const r = createTrialRunner();
    runner.current = r;
    setRows([]);
    setTrialError(null);
    setTrialOf(
      `${saved?.calibration && !calChanged ? `calibration v${saved.calibration.version}` : calChanged ? 'the unsaved calibration' : `calibration ${baseCal ? `v${baseCal.version}` : ''}`} with ${saved?.settings && !setChanged ? `settings v${saved.settings.version}` : setChanged ? 'the unsaved settings' : `settings ${baseSet ? `v${baseSet.version}` : ''}`}`,
    );
    const cal = calibration;
    const set = settings;
    try {
      const list = await apiFetch<ScanPage>(`/api/campaigns/${c.id}/scans?pageSize=200&sort=id&dir=asc`);
      const scans = list.rows.filter((s) => s.latestResultId !== null);
      const total = scans.reduce((a, s) => a + (s.nSteps ?? 1), 0);
      let done = 0;
      setProgress({ done, total });
      for (const s of scans) {
        const title = s.title || s.fileName || `Scan ${s.id}`;
        let before: ResultResponse;
        try {
          before = await apiFetch<ResultResponse>(`/api/scans/${s.id}/result`);
        } catch (err) {
          setRows((rs) => [...rs, { scanId: s.id, title, change: null, problem: (err as Error).message }]);
          done += s.nSteps ?? 1;
          setProgress({ done, total });
          continue;
        }
        for (const b of before.result.steps) {
          if (runner.current !== r) return; // a newer trial started
          let row: TrialRow;
          try {
            const frame = decodeFrame(await apiFetch<RawFrameResponse>(`/api/scans/${s.id}/raw-frame?step=${b.index}`));
            const after = await r.run(frame, { calibration: cal, settings: set, factor: 1, bootstrap: false });
            row = { scanId: s.id, title, change: stepChange(b, after.step), problem: null };
          } catch (err) {
            row = { scanId: s.id, title, change: null, problem: (err as Error).message };
          }
          done += 1;
          setRows((rs) => [...rs, row]);
          setProgress({ done, total });
        }
      }
      setProgress({ done: total, total });
    } catch (err) {
      setTrialError((err as Error).message);
    }
  }

  async function approve() {
    setApproving(true);
    setApproveError(null);
    try {
      const labels: string[] = [];
      // settings first (without a batch), so the one batch uses the new pair
      if (setDraft) {
        await apiFetch(`/api/campaigns/${c.id}/settings/${setDraft.id}/approve`, { method: 'POST', json: {} });
        labels.push(`settings v${setDraft.version}`);
      }
      let b: { batchId: number; total: number; queued: number } | null = null;
      if (calDraft) {
        const r = await apiFetch<{ batch?: { batchId: number; total: number; queued: number } | null }>(
          `/api/campaigns/${c.id}/calibrations/${calDraft.id}/approve`,
          { method: 'POST', json: { rereduce: true } },
        );
        b = r.batch ?? null;
        labels.unshift(`calibration v${calDraft.version}`);
      } else if (setDraft) {
        const r = await apiFetch<{ batch?: { batchId: number; total: number; queued: number } | null }>(
          `/api/campaigns/${c.id}/settings/${setDraft.id}/approve`,
          { method: 'POST', json: { rereduce: true } },
        );
        b = r.batch ?? null;
      }
      setBatch(b);
      setApprovedLabel(labels.join(' and '));
      qc.invalidateQueries({ queryKey: ['versions', c.id] });
      qc.invalidateQueries({ queryKey: ['campaign', c.id] });
    } catch (err) {
      setApproveError((err as Error).message);
    } finally {
      setApproving(false);
    }
  }

  const sorted = [...rows].sort((a, b) => {
    const pa = a.change ? (largestPull(a.change) ?? -1) : -2;
    const pb = b.change ? (largestPull(b.change) ?? -1) : -2;
    return pb - pa;
  });
  const running = progress !== null && progress.done < progress.total;

  return (
    <div className="grid gap-6 2xl:grid-cols-[28rem_minmax(0,1fr)]">
      <Panel title="Keep it" description="Every save is a new draft version; nothing changes until the PI approves.">
        {can.editCalibration ? (
          <div className="space-y-3">
            <label className="block text-small text-ink-700">
              Note for the version
              <textarea
                className={`${inputClass()} mt-1`}
                rows={2}
                value={note}
                maxLength={2000}
                onChange={(e) => setNote(e.target.value)}
                placeholder="What you changed and why"
                data-testid="bench-note"
              />
            </label>
            <Button onClick={save} isLoading={saving} disabled={!unsaved || saving} data-testid="bench-save">
              {unsaved
                ? `Save as new ${[calChanged ? 'calibration' : null, setChanged ? 'settings' : null].filter(Boolean).join(' and ')} version`
                : saved
                  ? 'Saved'
                  : 'Nothing changed yet'}
            </Button>
            {saveError ? <ErrorState message={saveError} /> : null}
          </div>
        ) : (
          <p className="text-small text-ink-600">An analyst of the team saves versions from the bench.</p>
        )}
        {saved ? (
          <p className="mt-3 text-small text-lobe-700" role="status" data-testid="bench-saved">
            Saved as{' '}
            {[
              saved.calibration ? `calibration v${saved.calibration.version}` : null,
              saved.settings ? `settings v${saved.settings.version}` : null,
            ]
              .filter(Boolean)
              .join(' and ')}{' '}
            (draft).{' '}
            <Link className="underline" href={`/campaigns/${c.id}/calibration`}>
              Versions of the campaign
            </Link>
          </p>
        ) : null}
        {can.approveCalibration && (calDraft || setDraft) ? (
          <div className="mt-4 space-y-2 rounded-md bg-flare-50 p-3 text-small ring-1 ring-flare-200">
            <p className="font-medium text-ink-900">
              Approve{' '}
              {[calDraft ? `calibration v${calDraft.version}` : null, setDraft ? `settings v${setDraft.version}` : null]
                .filter(Boolean)
                .join(' and ')}
              ?
            </p>
            <p className="text-ink-700">
              {unsaved ? 'The bench has changes beyond this version; they are not part of the approval. ' : null}
              The approved version becomes the campaign&apos;s current one and every scan is re-reduced with it as one
              batch. Earlier results stay, linked to their versions. Run the trial first to see what changes.
            </p>
            <Button
              onClick={approve}
              isLoading={approving}
              disabled={approving || !!approvedLabel}
              data-testid="bench-approve"
            >
              Approve and re-reduce the campaign
            </Button>
            {approveError ? <ErrorState message={approveError} /> : null}
          </div>
        ) : null}
        {approvedLabel ? (
          <div className="mt-4 space-y-2" data-testid="bench-approved">
            <p className="text-small text-lobe-700" role="status">
              Approved {approvedLabel}.{' '}
              {batch
                ? `Batch ${batch.batchId}: ${batch.queued} of ${batch.total} scans queued.`
                : 'Nothing to re-reduce.'}
            </p>
            <BatchesPanel campaignId={c.id} canStart={false} currentLabel={null} compact />
            <ReReduced campaignId={c.id} />
          </div>
        ) : null}
      </Panel>

      <Panel
        title="What would change"
        description={
          trialOf
            ? `Trial of ${trialOf}, reduced in this browser at full resolution; kept on this page only, never stored as a result.`
            : 'Reduces every step of the campaign’s scans in this browser with the bench’s calibration and settings, and lists each change against the scan’s current result.'
        }
        actions={
          <Button variant="secondary" size="sm" onClick={runTrial} disabled={running} data-testid="bench-trial">
            {running
              ? `Trying… ${progress?.done} of ${progress?.total}`
              : rows.length
                ? 'Run the trial again'
                : 'Run the trial on the campaign'}
          </Button>
        }
        data-testid="bench-trial-panel"
      >
        {trialError ? <ErrorState message={trialError} /> : null}
        {progress ? (
          <div className="mb-3">
            <div className="h-1.5 overflow-hidden rounded-full bg-ink-100">
              <div
                className="h-full bg-lobe-500"
                style={{ width: `${progress.total ? Math.round((100 * progress.done) / progress.total) : 100}%` }}
              />
            </div>
            <p className="mt-1 text-micro text-ink-500" data-testid="bench-trial-progress">
              {progress.done} of {progress.total} steps tried
              {progress.done === progress.total ? ' · done' : ''}
            </p>
          </div>
        ) : null}
        {rows.length ? (
          <div className="overflow-x-auto">
            <table className="w-full text-small" data-testid="bench-trial-rows">
              <thead className="text-left text-micro text-ink-500">
                <tr>
                  <th className="py-1 pr-3">scan</th>
                  <th className="pr-3">step</th>
                  <th className="pr-3">offset before → after</th>
                  <th className="pr-3">radius (a.u.)</th>
                  <th className="pr-3">intensity (W/cm²)</th>
                </tr>
              </thead>
              <tbody>
                {sorted.map((r, i) => (
                  <tr key={`${r.scanId}-${r.change?.step ?? `x${i}`}`} className="border-t border-ink-100">
                    <td className="py-1 pr-3 align-top">
                      <Link className="text-lobe-700 hover:underline" href={`/scans/${r.scanId}`}>
                        {r.title}
                      </Link>
                      {r.scanId === scanId ? <Badge tone="info">on the bench</Badge> : null}
                    </td>
                    {r.change ? (
                      <>
                        <td className="pr-3 align-top font-mono">{r.change.step + 1}</td>
                        <Change c={r.change.offsetDeg} digits={4} unit="°" testId="trial-offset" />
                        <Change c={r.change.radiusAu} digits={4} unit="" />
                        <Change c={r.change.intensityWcm2} digits={3} unit="" />
                      </>
                    ) : (
                      <td colSpan={4} className="text-fault-700">
                        {r.problem}
                      </td>
                    )}
                  </tr>
                ))}
              </tbody>
            </table>
            <p className="mt-2 text-micro text-ink-500">
              Changes in units of the current result&apos;s error (its bootstrap σ); largest first. The trial does not
              resample: its step offset weights the lobes with the current result&apos;s lobe errors, so an unchanged
              calibration changes nothing.
            </p>
          </div>
        ) : null}
      </Panel>
    </div>
  );
}

/** The campaign's current results after the approval, following the batch. */
function ReReduced({ campaignId }: { campaignId: number }) {
  const qc = useQueryClient();
  const q = useQuery({
    queryKey: ['bench-rereduced', campaignId],
    queryFn: () => apiFetch<ScanPage>(`/api/campaigns/${campaignId}/scans?pageSize=200&sort=id&dir=asc`),
    refetchInterval: (qq) =>
      qq.state.data?.rows.some((r) => r.status === 'queued' || r.status === 'reducing') ? 1500 : false,
  });
  const settled = q.data ? !q.data.rows.some((r) => r.status === 'queued' || r.status === 'reducing') : false;
  useEffect(() => {
    // the batch list follows the worker on its own clock; bring it up to date when the last scan settles
    if (settled) qc.invalidateQueries({ queryKey: campaignKeys.batches(campaignId) });
  }, [settled, qc, campaignId]);
  if (!q.data) return null;
  return (
    <table className="w-full text-small" data-testid="bench-rereduced">
      <thead className="text-left text-micro text-ink-500">
        <tr>
          <th className="py-1">scan</th>
          <th>status</th>
          <th>offset (°)</th>
          <th>versions</th>
        </tr>
      </thead>
      <tbody>
        {q.data.rows.map((r) => (
          <tr key={r.id} className="border-t border-ink-100">
            <td className="py-1">{r.title || r.fileName || `Scan ${r.id}`}</td>
            <td>{r.status}</td>
            <td className="font-mono">
              {formatNumber(r.offsetDeg, 4)}
              {r.offsetErrDeg != null ? ` ± ${formatNumber(r.offsetErrDeg, 2)}` : ''}
            </td>
            <td className="font-mono" data-testid="rereduced-versions">
              cal v{r.calibrationVersion ?? '—'} · set v{r.settingsVersion ?? '—'}
            </td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}
