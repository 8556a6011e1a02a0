'use client';

import { useDropzone } from 'react-dropzone';
import { displayUnits } from '@/components/scans/format';
import { Badge, Button, Panel } from '@/components/ui';
import { formatNumber } from '@/lib/format';
import { checkAgainstLog } from '@/lib/ingest/log-check';
import type { LogEntryDto, UnfinishedUploadDto } from '@/lib/ingest/types';
import { attentionFor } from './attention';
import { formatBytes, formatDuration, formatRate, KIND_WORDS } from './format';
import { FramePreview } from './frame-preview';
import type { IngestQueue, QueueItem } from './use-ingest-queue';

/** A count of events written out in full, with thin spaces between thousands (e.g. 120 431). */
function countText(n: number): string {
  return Math.round(n)
    .toString()
    .replace(/\B(?=(\d{3})+(?!\d))/g, '\u2009');
}

function Bar({ value, tone = 'lobe', label }: { value: number; tone?: 'lobe' | 'flare' | 'fault'; label: string }) {
  const pct = Math.max(0, Math.min(100, value * 100));
  const colour = tone === 'lobe' ? 'bg-lobe-500' : tone === 'flare' ? 'bg-flare-500' : 'bg-fault-500';
  return (
    <div
      role="progressbar"
      aria-label={label}
      aria-valuemin={0}
      aria-valuemax={100}
      aria-valuenow={Math.round(pct)}
      className="h-2 w-full overflow-hidden rounded-full bg-ink-100"
    >
      <div className={`h-full ${colour} transition-[width] duration-300`} style={{ width: `${pct}%` }} />
    </div>
  );
}

const PHASE_WORDS: Record<QueueItem['phase'], string> = {
  checking: 'Reading the file…',
  ready: 'Ready',
  queued: 'Waiting to send',
  sending: 'Sending',
  'waiting-hash': 'Finishing the checksum…',
  verifying: 'Verifying in storage (size, SHA-256, every frame)…',
  done: 'Stored',
  failed: 'Not stored',
  cancelled: 'Cancelled — not stored',
};

function Verdict({ item }: { item: QueueItem }) {
  const o = item.outcome;
  if (!o) return null;
  if (o.outcome === 'accepted') return <Badge tone="good">Accepted · scan {o.scanId}</Badge>;
  if (o.outcome === 'duplicate') return <Badge tone="info">Identical to a stored file · linked</Badge>;
  return <Badge tone="bad">Quarantined</Badge>;
}

function ItemRow({
  item,
  queue,
  log,
  resumable,
}: {
  item: QueueItem;
  queue: IngestQueue;
  log: LogEntryDto[];
  resumable: UnfinishedUploadDto | undefined;
}) {
  const pc = item.precheck;
  const s = pc?.summary;
  const problems = item.precheckError ? [item.precheckError] : (pc?.problems ?? []);
  const mismatches = s
    ? checkAgainstLog(log, {
        target: s.target,
        wavelengthNm: s.wavelengthNm,
        ellipticity: s.ellipticity,
        startTime: s.startTime,
        stepQuantity: s.stepQuantity,
        stepValues: s.stepValues,
      })
    : [];
  const attention = attentionFor(item, queue.items, queue.campaign);
  const busy = ['queued', 'sending', 'waiting-hash', 'verifying'].includes(item.phase);
  const hasProblems = problems.length > 0;
  const fraction = item.file.size ? item.loaded / item.file.size : 1;
  return (
    <li className="flex gap-4 py-4" data-testid="drop-item" data-file={item.file.name} data-phase={item.phase}>
      {pc?.preview ? (
        <FramePreview preview={pc.preview} />
      ) : (
        <div className="grid size-24 shrink-0 place-items-center rounded-md bg-ink-50 text-micro text-ink-400 ring-1 ring-ink-200">
          {item.phase === 'checking' ? 'reading…' : 'no preview'}
        </div>
      )}
      <div className="min-w-0 flex-1 space-y-2">
        <div className="flex flex-wrap items-center gap-2">
          <span className="truncate font-medium text-ink-900">{item.file.name}</span>
          <span className="text-small text-ink-500">{formatBytes(item.file.size)}</span>
          {item.replacesRawFileId ? <Badge tone="info">replaces file {item.replacesRawFileId}</Badge> : null}
          {resumable && item.phase === 'ready' ? <Badge tone="info">continues an unfinished upload</Badge> : null}
          {item.phase === 'done' ? (
            <Verdict item={item} />
          ) : item.phase === 'ready' && hasProblems ? (
            <Badge tone="warn">Has problems</Badge>
          ) : (
            <Badge tone={item.phase === 'failed' ? 'bad' : 'neutral'}>{PHASE_WORDS[item.phase]}</Badge>
          )}
        </div>
        {s ? (
          <dl
            className="grid grid-cols-2 gap-x-4 gap-y-0.5 text-small text-ink-700 sm:grid-cols-3 lg:grid-cols-6"
            data-testid="precheck-summary"
          >
            <div>
              <dt className="text-micro text-ink-500">Kind</dt>
              <dd>{KIND_WORDS[s.experimentKind ?? ''] ?? s.experimentKind}</dd>
            </div>
            <div>
              <dt className="text-micro text-ink-500">Target</dt>
              <dd>{s.target}</dd>
            </div>
            <div>
              <dt className="text-micro text-ink-500">Wavelength</dt>
              <dd>{s.wavelengthNm} nm</dd>
            </div>
            <div>
              <dt className="text-micro text-ink-500">Steps</dt>
              <dd>
                {s.nSteps} × {s.stepQuantity?.replace('_', ' ')}
                {s.stepUnits && s.stepUnits !== '1' ? ` (${displayUnits(s.stepUnits)})` : ''}
              </dd>
            </div>
            {s.events ? (
              <>
                <div>
                  <dt className="text-micro text-ink-500">Events</dt>
                  <dd data-testid="precheck-events">
                    {countText(s.events.count)} ({s.countsDtype})
                  </dd>
                </div>
                <div>
                  <dt className="text-micro text-ink-500">First events on the grid</dt>
                  <dd>
                    {pc?.preview ? `${countText(pc.preview.totalCounts)} of ${countText(s.events.previewEvents)}` : '—'}
                  </dd>
                </div>
              </>
            ) : (
              <>
                <div>
                  <dt className="text-micro text-ink-500">Image</dt>
                  <dd>
                    {s.nX} × {s.nY} px, {s.countsDtype}
                  </dd>
                </div>
                <div>
                  <dt className="text-micro text-ink-500">First frame</dt>
                  <dd>{pc?.preview ? `${formatNumber(pc.preview.totalCounts, 3)} counts` : '—'}</dd>
                </div>
              </>
            )}
          </dl>
        ) : null}
        {s?.events ? (
          <p className="text-small text-ink-700" data-testid="precheck-spectrometer">
            <span className="text-micro text-ink-500">Spectrometer (from the file; a calibration may override): </span>L{' '}
            {s.events.spectrometer.acceleration_length_m} m · D {s.events.spectrometer.drift_length_m} m · E{' '}
            {s.events.spectrometer.electric_field_v_per_m} V/m · B {s.events.spectrometer.magnetic_field_t} T · t₀{' '}
            {s.events.spectrometer.t0_ns} ns · centre ({s.events.spectrometer.detector_center_mm[0]},{' '}
            {s.events.spectrometer.detector_center_mm[1]}) mm · events per step{' '}
            {s.events.perStep
              .slice(0, 6)
              .map((n) => countText(n))
              .join(', ')}
            {s.events.perStep.length > 6 ? ', …' : ''}
          </p>
        ) : null}
        {hasProblems && !item.outcome ? (
          <div
            className="rounded-md bg-fault-50 px-3 py-2 text-small text-fault-700 ring-1 ring-fault-100"
            data-testid="precheck-problems"
          >
            <p className="font-medium">
              The file breaks {problems.length === 1 ? 'a rule' : `${problems.length} rules`} of the scan-file format:
            </p>
            <ul className="mt-1 list-disc space-y-0.5 pl-5 font-mono text-micro">
              {problems.slice(0, 8).map((p) => (
                <li key={p}>{p}</li>
              ))}
              {problems.length > 8 ? <li>… and {problems.length - 8} more</li> : null}
            </ul>
          </div>
        ) : null}
        {mismatches.length ? (
          <div
            className="rounded-md bg-flare-50 px-3 py-2 text-small text-flare-900 ring-1 ring-flare-200"
            data-testid="log-mismatch"
          >
            <p className="font-medium">Differs from the shift log:</p>
            <ul className="mt-1 list-disc pl-5">
              {mismatches.map((m) => (
                <li key={m.field}>{m.sentence}</li>
              ))}
            </ul>
          </div>
        ) : null}
        {attention.length && !item.outcome ? (
          <div
            className="rounded-md bg-flare-50 px-3 py-2 text-small text-flare-900 ring-1 ring-flare-200"
            data-testid="precheck-attention"
          >
            <ul className="list-disc space-y-0.5 pl-5">
              {attention.map((a) => (
                <li key={a.sentence} data-kind={a.kind}>
                  {a.sentence}
                </li>
              ))}
            </ul>
            {item.phase === 'ready' ? (
              <label className="mt-2 flex items-center gap-2 font-medium">
                <input
                  type="checkbox"
                  checked={item.confirmed}
                  onChange={(e) => queue.setConfirmed(item.key, e.target.checked)}
                  className="size-4 accent-flare-600"
                  data-testid="confirm-attention"
                />
                {attention.some((a) => a.kind === 'campaign')
                  ? 'Send it to this campaign all the same'
                  : 'Send it all the same'}
              </label>
            ) : null}
          </div>
        ) : null}
        {pc?.warnings.length ? (
          <div
            className="rounded-md bg-flare-50 px-3 py-2 text-small text-flare-900 ring-1 ring-flare-200"
            data-testid="precheck-warnings"
          >
            <p className="font-medium">
              {pc.warnings.length === 1 ? 'One warning' : `${pc.warnings.length} warnings`}; the file can still be sent
              and reduced:
            </p>
            <ul className="mt-1 list-disc space-y-0.5 pl-5 font-mono text-micro">
              {pc.warnings.slice(0, 8).map((w) => (
                <li key={w}>{w}</li>
              ))}
              {pc.warnings.length > 8 ? <li>… and {pc.warnings.length - 8} more</li> : null}
            </ul>
          </div>
        ) : null}
        {hasProblems && item.phase === 'ready' ? (
          <label className="flex items-center gap-2 text-small text-ink-700">
            <input
              type="checkbox"
              checked={item.sendAnyway}
              onChange={(e) => queue.setSendAnyway(item.key, e.target.checked)}
              className="size-4 accent-fault-600"
            />
            Send it anyway — it will be stored unchanged and quarantined for an analyst to look at
          </label>
        ) : null}
        {item.phase !== 'checking' && item.phase !== 'ready' && item.phase !== 'cancelled' ? (
          <div className="space-y-1">
            <Bar
              value={fraction}
              tone={item.phase === 'failed' ? 'fault' : 'lobe'}
              label={`Progress of ${item.file.name}`}
            />
            <p className="text-micro text-ink-500" data-testid="item-progress">
              {Math.floor(fraction * 100)} % · {formatBytes(item.loaded)} of {formatBytes(item.file.size)}
              {item.resumedBytes ? ` · ${formatBytes(item.resumedBytes)} were already stored` : ''}
              {item.sha256
                ? ' · SHA-256 ready'
                : ` · SHA-256 ${Math.floor((item.hashBytes / Math.max(1, item.file.size)) * 100)} %`}
            </p>
          </div>
        ) : null}
        {item.retry && busy ? (
          <p className="text-small text-flare-900" role="status" data-testid="item-retry">
            {item.retry.reason}{' '}
            {item.retry.offline
              ? `The browser reports no network connection; trying again as soon as it is back, at the latest in ${formatDuration(item.retry.waitMs / 1000)}`
              : `Trying again in ${formatDuration(item.retry.waitMs / 1000)}`}{' '}
            (attempt {item.retry.attempt + 1} of {item.retry.maxAttempts}); nothing already stored is lost.
          </p>
        ) : null}
        {item.outcome ? (
          <div className="text-small text-ink-700" data-testid="item-outcome">
            <p>{item.outcome.message}</p>
            <p className="font-mono text-micro break-all text-ink-500">SHA-256 {item.outcome.sha256}</p>
            {item.outcome.warnings?.map((w) => (
              <p key={w} className="text-micro text-flare-900" data-testid="item-warning">
                {w}
              </p>
            ))}
            {item.outcome.reasons.length ? (
              <ul className="mt-1 list-disc pl-5 font-mono text-micro text-fault-700">
                {item.outcome.reasons.map((r) => (
                  <li key={r}>{r}</li>
                ))}
              </ul>
            ) : null}
          </div>
        ) : null}
        {item.error ? (
          <div className="text-small text-fault-700" role="status">
            <p>{item.error.message}</p>
            {item.error.details.map((d) => (
              <p key={d} className="text-micro">
                {d}
              </p>
            ))}
          </div>
        ) : null}
      </div>
      <div className="flex shrink-0 flex-col items-end gap-2">
        {busy ? (
          <Button size="sm" variant="secondary" onClick={() => queue.cancel(item.key)}>
            Cancel
          </Button>
        ) : null}
        {item.phase === 'failed' || item.phase === 'cancelled' ? (
          <Button size="sm" variant="secondary" onClick={() => queue.retry(item.key)}>
            Send again
          </Button>
        ) : null}
        {item.phase === 'ready' || item.phase === 'done' || item.phase === 'failed' || item.phase === 'cancelled' ? (
          <Button size="sm" variant="ghost" onClick={() => queue.remove(item.key)}>
            {item.phase === 'done' ? 'Hide' : 'Remove'}
          </Button>
        ) : null}
      </div>
    </li>
  );
}

export function DropPanel({
  queue,
  log,
  unfinished,
  canUpload,
}: {
  queue: IngestQueue;
  log: LogEntryDto[];
  unfinished: UnfinishedUploadDto[];
  canUpload: boolean;
}) {
  const { getRootProps, getInputProps, isDragActive } = useDropzone({
    onDrop: (files) => queue.addFiles(files),
    disabled: !canUpload,
    multiple: true,
    noClick: false,
  });
  const { items, stats } = queue;
  const sendable = items.filter(queue.isSendable);
  const withProblems = items.filter((i) => i.phase === 'ready' && !queue.isSendable(i));
  const unconfirmed = withProblems.filter(
    (i) => (i.precheck?.ok === true || i.sendAnyway) && attentionFor(i, items, queue.campaign).length > 0,
  ).length;
  const checking = items.some((i) => i.phase === 'checking');
  const matchUnfinished = (i: QueueItem) =>
    unfinished.find(
      (u) =>
        u.fileName === i.file.name &&
        u.sizeBytes === i.file.size &&
        u.lastModifiedMs === Math.round(i.file.lastModified),
    );

  return (
    <Panel
      title="Drop the shift's files"
      description="Each file is opened here in your browser first; what it contains, or what is wrong with it, shows before anything is sent."
      data-testid="drop-panel"
    >
      <div
        {...getRootProps({
          className: `flex cursor-pointer flex-col items-center justify-center gap-1 rounded-lg border-2 border-dashed px-6 py-10 text-center transition-colors ${
            !canUpload
              ? 'cursor-not-allowed border-ink-200 bg-ink-50 text-ink-400'
              : isDragActive
                ? 'border-lobe-500 bg-lobe-50 text-lobe-800'
                : 'border-ink-300 bg-white text-ink-600 hover:border-lobe-400 hover:bg-lobe-50/40'
          }`,
        })}
        data-testid="dropzone"
      >
        <input {...getInputProps()} data-testid="dropzone-input" aria-label="Choose scan files" />
        <svg aria-hidden="true" viewBox="0 0 24 24" className="size-8 text-lobe-600">
          <path
            d="M12 16V4m0 0-4 4m4-4 4 4M4 16v3a1 1 0 0 0 1 1h14a1 1 0 0 0 1-1v-3"
            fill="none"
            stroke="currentColor"
            strokeWidth="1.6"
            strokeLinecap="round"
            strokeLinejoin="round"
          />
        </svg>
        {canUpload ? (
          <>
            <p className="text-body font-medium">
              {isDragActive ? 'Release to add the files' : 'Drop HDF5 scan files here, or click to choose'}
            </p>
            <p className="text-small text-ink-500">
              .h5, .hdf5 or .nxs — many at once; large files go in parts and can continue after a reload.
            </p>
          </>
        ) : (
          <p className="text-body">This shift is closed or your role cannot upload; no files can be added.</p>
        )}
      </div>

      {unfinished.length ? (
        <div
          className="mt-4 rounded-md bg-ink-50 px-4 py-3 text-small text-ink-700 ring-1 ring-ink-200"
          data-testid="unfinished"
        >
          <p className="font-medium">Unfinished uploads in this shift</p>
          <p className="text-ink-500">
            Drop the same file again (same name, size and date) to continue where it stopped.
          </p>
          <ul className="mt-1 list-disc pl-5">
            {unfinished.map((u) => (
              <li key={u.uploadId}>
                {u.fileName} · {formatBytes(u.sizeBytes)} · started by {u.uploadedBy ?? 'someone'}
              </li>
            ))}
          </ul>
        </div>
      ) : null}

      {items.length ? (
        <>
          <div
            className="mt-5 flex flex-wrap items-center gap-3 rounded-md bg-ink-50 px-4 py-3 ring-1 ring-ink-100"
            data-testid="batch"
          >
            <div className="min-w-56 flex-1 space-y-1">
              <Bar value={stats.total ? stats.loaded / stats.total : 0} label="Progress of the batch" />
              <p className="text-micro text-ink-600" data-testid="batch-progress">
                {stats.total
                  ? `${Math.floor((stats.loaded / stats.total) * 100)} % of ${formatBytes(stats.total)}`
                  : 'Nothing sent yet'}
                {stats.active
                  ? ` · ${formatRate(stats.bytesPerSecond)} · ${formatDuration(stats.secondsLeft)} left`
                  : ''}
              </p>
            </div>
            {withProblems.length - unconfirmed > 0 ? (
              <p className="text-small text-fault-700">
                {withProblems.length - unconfirmed} with problems not selected
              </p>
            ) : null}
            {unconfirmed ? (
              <p className="text-small text-flare-900" data-testid="unconfirmed-count">
                {unconfirmed} waiting for your confirmation
              </p>
            ) : null}
            <Button onClick={queue.sendAll} disabled={!canUpload || sendable.length === 0} data-testid="send-all">
              {checking && sendable.length === 0
                ? 'Reading files…'
                : sendable.length === 0
                  ? 'Nothing left to send'
                  : `Send ${sendable.length} file${sendable.length === 1 ? '' : 's'} to storage`}
            </Button>
          </div>
          <ul className="divide-y divide-ink-100">
            {items.map((i) => (
              <ItemRow key={i.key} item={i} queue={queue} log={log} resumable={matchUnfinished(i)} />
            ))}
          </ul>
        </>
      ) : null}
    </Panel>
  );
}
