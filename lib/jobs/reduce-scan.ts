// One reduction job, start to end (C5): raw file from S3 to a temp file (streamed) → reader → reducer, frame by
// frame → result file (FORMATS §5) written step by step → derived bucket → ONE MariaDB transaction with the result
// row, its per-step rows, the scan's headline numbers and the locks on both versions.
//
// Idempotent: the result row is unique per (scan, calibration, settings); a job that finds it succeeds without a
// second row, and a job killed anywhere before the transaction's commit leaves nothing half-written in MariaDB
// (the derived object has a deterministic key and is simply overwritten by the retry).
import { createReadStream } from 'node:fs';
import { mkdtemp, rm, stat } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { UniqueConstraintError } from 'sequelize';
import { recordAudit } from '@/lib/audit';
import { getDb } from '@/lib/db';
import { applyMetadataOverride, overrideProvenance } from '@/lib/ingest/override';
import { metadataOverrideSchema } from '@/lib/ingest/schemas';
import { downloadVerified, StoredFileMismatchError } from '@/lib/ingest/verify';
import { log } from '@/lib/log';
import { type ReductionJobData, type ReductionJobOutcome, reductionBackoffMs } from '@/lib/queue/reduction-queue';
import { ARCHIVED_REDUCTION_MESSAGE } from '@/lib/stewardship/archive-words';
import { buckets, putObject } from '@/lib/storage/s3';
import {
  AnalysisSettingsVersion,
  DetectorCalibrationVersion,
  RawFile,
  ReductionJob,
  Scan,
  ScanResult,
  ScanResultStep,
  Team,
} from '@/models';
import { type LobelineResult, parseAnyCalibration, SOFTWARE_VERSION } from '@/reduction/formats';
import { loadH5wasmNode, openScanOrEventsPath } from '@/reduction/hdf5/node';
import { ScanFileRefusedError } from '@/reduction/hdf5/problems';
import { runEventReduction, runReduction } from './engine';
import { handOffEventFile, shouldSplitEvents } from './event-split';
import { describeAttempt, explainFailure, ReductionRefusedError } from './failure';
import { notifyReductionFailure } from './notify';
import { preflight, preflightEvents } from './preflight';

const jlog = log.child({ surface: 'reduction' });

/** What the processor needs from the queue job (kept small so tests can drive it without BullMQ). */
export interface JobContext {
  /** Attempts BullMQ made before this one (0 on the first run). */
  attemptsMade: number;
  /** Attempts allowed in total. */
  maxAttempts: number;
  updateProgress(fraction: number): Promise<void>;
}

/** Key of the result file in the derived bucket: deterministic, so a retry overwrites its own half-finished upload. */
export function derivedResultKey(teamSlug: string, scanId: number, calibrationId: number, settingsId: number): string {
  return `derived/${teamSlug}/${scanId}/cal-${calibrationId}-set-${settingsId}.h5`;
}

/** Throttled progress: the queue job and the reduction_jobs row, at most every 750 ms (and always at 0 and 1). */
function progressReporter(jobId: number, ctx: JobContext) {
  let last = 0;
  let lastValue = -1;
  return async (fraction: number, force = false) => {
    const f = Math.max(0, Math.min(1, fraction));
    const now = Date.now();
    if (!force && now - last < 750 && f < 1) return;
    if (Math.abs(f - lastValue) < 1e-4 && !force) return;
    last = now;
    lastValue = f;
    try {
      await Promise.all([
        ctx.updateProgress(Math.round(f * 1000) / 10),
        ReductionJob.update({ progress: f }, { where: { id: jobId } }),
      ]);
    } catch (err) {
      jlog.warn('progress not recorded', { jobId, err });
    }
  };
}

/** Points the scan at an existing result (used when the requested versions were already reduced). */
export async function adoptExistingResult(existing: ScanResult, jobId: number): Promise<ReductionJobOutcome> {
  await getDb().transaction(async (transaction) => {
    await Scan.update(
      {
        status: 'reduced',
        status_message: null,
        latest_result_id: existing.id,
        offset_deg: existing.offset_deg,
        offset_err_deg: existing.offset_err_deg,
      },
      { where: { id: existing.scan_id }, transaction },
    );
    await ReductionJob.update(
      { status: 'succeeded', progress: 1, error_message: null, finished_at: new Date() },
      { where: { id: jobId }, transaction },
    );
  });
  return { resultId: existing.id, reusedExisting: true };
}

/**
 * Runs one reduction job.
 *
 * @throws the original error for transient problems (BullMQ retries with back-off), ReductionRefusedError for
 *   permanent ones; in both cases the job row and the scan already say why
 */
export async function processReduction(data: ReductionJobData, ctx: JobContext): Promise<ReductionJobOutcome> {
  getDb();
  const { scanId, calibrationId, settingsId, reductionJobId } = data;
  const job = await ReductionJob.findByPk(reductionJobId);
  if (!job) throw new ReductionRefusedError(`The reduction request ${reductionJobId} no longer exists.`);
  if (job.status === 'failed') {
    // A stale queue entry (e.g. one that Redis accepted after the web request had already given up and recorded the
    // failure): the request is closed, so nothing runs; asking again opens a new one.
    throw new ReductionRefusedError(`The reduction request ${reductionJobId} was already closed as failed.`);
  }
  const existing = await ScanResult.findOne({
    where: { scan_id: scanId, calibration_id: calibrationId, settings_id: settingsId },
  });
  if (existing) return adoptExistingResult(existing, job.id);

  const progress = progressReporter(job.id, ctx);
  let workDir: string | null = null;
  let scanFile: { close(): void } | null = null;
  let overrideCleanup: (() => Promise<void>) | null = null;
  let context: {
    teamId: number;
    campaignId: number;
    title: string | null;
    fileName: string | null;
    calV: number | null;
    setV: number | null;
  } | null = null;
  try {
    const scan = await Scan.findByPk(scanId);
    if (!scan) throw new ReductionRefusedError('The scan was deleted before it could be reduced.');
    const [file, team, cal, set] = await Promise.all([
      RawFile.findByPk(scan.raw_file_id),
      Team.findByPk(scan.team_id, { attributes: ['slug'] }),
      DetectorCalibrationVersion.findByPk(calibrationId),
      AnalysisSettingsVersion.findByPk(settingsId),
    ]);
    context = {
      teamId: scan.team_id,
      campaignId: scan.campaign_id,
      title: scan.title,
      fileName: file?.original_name ?? null,
      calV: cal?.version ?? null,
      setV: set?.version ?? null,
    };
    if (!file || file.deleted_at) throw new ReductionRefusedError('The raw file of this scan is no longer stored.');
    if (file.status === 'quarantined') {
      throw new ReductionRefusedError('The raw file is quarantined; release it before reducing the scan.');
    }
    // Archived after the job was queued: ask for a restore (lib/stewardship/archive.ts) rather than read the archive.
    if (file.archive_state !== 'online') throw new ReductionRefusedError(ARCHIVED_REDUCTION_MESSAGE);
    if (!cal || !set) throw new ReductionRefusedError('The chosen calibration or settings version no longer exists.');
    if (!team) throw new ReductionRefusedError('The scan’s team no longer exists.');

    await job.update({
      status: 'running',
      attempts: job.attempts + 1,
      started_at: new Date(),
      error_message: null,
      progress: 0,
    });
    await scan.update({
      status: 'reducing',
      status_message: `Reducing with calibration v${cal.version} and settings v${set.version}.`,
    });
    await progress(0, true);

    // 1. Raw file → temp file, streamed (never held in memory).
    workDir = await mkdtemp(path.join(tmpdir(), `lobeline-reduce-${scanId}-`));
    const rawPath = path.join(workDir, 'raw.h5');
    // Size and SHA-256 are checked against the catalogue on the way: only the verified bytes are reduced.
    try {
      await downloadVerified(file.bucket, file.storage_key, rawPath, {
        sha256: file.sha256,
        sizeBytes: Number(file.size_bytes),
      });
    } catch (err) {
      if (!(err instanceof StoredFileMismatchError)) throw err;
      // A short download is a transport problem, worth another attempt; other bytes of the right size are not.
      if (err.found.bytes !== err.expected.sizeBytes) {
        throw new Error(`ECONNRESET-like short download: ${err.found.bytes} of ${err.expected.sizeBytes} bytes`);
      }
      throw new ReductionRefusedError(err.message);
    }
    await progress(0.05, true);

    // 1b. A file released with corrected metadata: the analyst's override goes over a scratch copy (the stored
    // bytes never change), exactly as the release's re-validation applied it.
    let scanPath = rawPath;
    let overrides: Record<string, string | number> | null = null;
    if (file.metadata_override) {
      const parsed = metadataOverrideSchema.safeParse(file.metadata_override);
      if (!parsed.success) {
        throw new ReductionRefusedError('The corrected metadata recorded with this file is not valid any more.');
      }
      const applied = await applyMetadataOverride(await loadH5wasmNode(), rawPath, parsed.data);
      if (!applied.ok) {
        throw new ReductionRefusedError(`The corrected metadata could not be applied: ${applied.problems.join('; ')}`);
      }
      overrideCleanup = applied.cleanup;
      scanPath = applied.path;
      overrides = overrideProvenance(parsed.data);
    }

    // 2. Open and check everything before the first frame (or event). An event file takes the calibration's
    // spectrometer values over its own.
    const calParsed = parseAnyCalibration(cal.body);
    const opened = await openScanOrEventsPath(scanPath, {
      spectrometer: calParsed.ok ? (calParsed.value.spectrometer ?? null) : null,
    });
    if (!opened.ok) throw new ScanFileRefusedError(opened.problems);
    scanFile = opened.scan;
    const labels = { calibration: `calibration v${cal.version}`, settings: `settings v${set.version}` };
    const outPath = path.join(workDir, 'result.h5');
    let result: LobelineResult;
    if (opened.kind === 'events' && shouldSplitEvents(opened.scan.events.nEvents)) {
      // 3'. A large event file: chunk jobs spread over the workers, and a merge job that finishes this request
      // (./event-split.ts). The request stays 'running'; the merge commits its result.
      preflightEvents(cal.body, set.body, labels);
      return await handOffEventFile({
        data,
        scan: opened.scan,
        overrides,
        readerWarnings: opened.warnings,
      });
    }
    if (opened.kind === 'events') {
      // 3. Events chunk by chunk, histogrammed per step, through the reducer into the result file.
      const { calibration, settings } = preflightEvents(cal.body, set.body, labels);
      ({ result } = await runEventReduction({
        scan: opened.scan,
        calibration,
        settings,
        sha256: file.sha256,
        overrides,
        outPath,
        readerWarnings: opened.warnings,
        onEvents: (done, total) => progress(0.05 + 0.85 * (done / Math.max(1, total))),
      }));
    } else {
      const { calibration, settings } = preflight(opened.scan.meta, cal.body, set.body, labels);
      // 3. Frame by frame through the reducer into the result file.
      ({ result } = await runReduction({
        scan: opened.scan,
        calibration,
        settings,
        sha256: file.sha256,
        overrides,
        outPath,
        readerWarnings: opened.warnings,
        onStep: (done, total) => progress(0.05 + 0.85 * (done / total)),
      }));
    }
    scanFile.close();
    scanFile = null;

    // 4. Result file → derived bucket.
    const key = derivedResultKey(team.slug, scanId, calibrationId, settingsId);
    const derivedBucket = buckets().derived;
    const outSize = (await stat(outPath)).size;
    await putObject({
      bucket: derivedBucket,
      key,
      body: createReadStream(outPath),
      contentLength: outSize,
      contentType: 'application/x-hdf5',
      metadata: { scan: String(scanId), calibration: String(calibrationId), settings: String(settingsId) },
    });
    await progress(0.95, true);

    // 5. One transaction: result, steps, scan, locks, job, audit.
    const outcome = await commitResult({
      scan,
      rawFileId: file.id,
      calibrationId,
      settingsId,
      jobId: job.id,
      result,
      derivedBucket,
      derivedKey: key,
      teamId: scan.team_id,
      requestedBy: job.requested_by,
    });
    await progress(1, true);
    jlog.info('reduction finished', { scanId, calibrationId, settingsId, resultId: outcome.resultId });
    return outcome;
  } catch (err) {
    const ex = explainFailure(err);
    const attemptNo = ctx.attemptsMade + 1;
    const outcome = describeAttempt(ex, attemptNo, ctx.maxAttempts, reductionBackoffMs(attemptNo));
    const final = outcome.final;
    jlog.warn('reduction attempt failed', { scanId, reductionJobId, attemptNo, final, err });
    if (final) {
      await markReductionFailed({ reductionJobId, scanId, message: outcome.jobMessage, attempts: attemptNo, context });
    } else {
      await ReductionJob.update(
        { status: 'queued', error_message: outcome.jobMessage },
        { where: { id: reductionJobId } },
      ).catch(() => undefined);
      await Scan.update({ status: 'queued', status_message: outcome.scanMessage }, { where: { id: scanId } }).catch(
        () => undefined,
      );
    }
    if (ex.transient && !final) throw err;
    throw err instanceof ReductionRefusedError ? err : new ReductionRefusedError(outcome.jobMessage);
  } finally {
    try {
      scanFile?.close();
    } catch {
      // already closed
    }
    if (overrideCleanup) await overrideCleanup().catch(() => undefined);
    if (workDir) await rm(workDir, { recursive: true, force: true }).catch(() => undefined);
  }
}

export interface CommitInput {
  scan: Scan;
  rawFileId: number;
  calibrationId: number;
  settingsId: number;
  jobId: number;
  result: LobelineResult;
  derivedBucket: string;
  derivedKey: string;
  teamId: number;
  requestedBy: number | null;
}

/** Headline offset of a result: the inverse-variance mean over steps (or the single step's value). */
export function headlineOffset(result: LobelineResult): { offset: number | null; err: number | null } {
  let sw = 0;
  let swx = 0;
  let plain = 0;
  let nPlain = 0;
  for (const s of result.steps) {
    if (s.offset_deg == null || !Number.isFinite(s.offset_deg)) continue;
    plain += s.offset_deg;
    nPlain += 1;
    const e = s.offset_err_deg;
    if (e != null && e > 0 && Number.isFinite(e)) {
      sw += 1 / (e * e);
      swx += s.offset_deg / (e * e);
    }
  }
  if (sw > 0) return { offset: swx / sw, err: Math.sqrt(1 / sw) };
  return nPlain ? { offset: plain / nPlain, err: null } : { offset: null, err: null };
}

export async function commitResult(input: CommitInput): Promise<ReductionJobOutcome> {
  const { result } = input;
  const head = headlineOffset(result);
  try {
    return await getDb().transaction(async (transaction) => {
      const row = await ScanResult.create(
        {
          scan_id: input.scan.id,
          raw_file_id: input.rawFileId,
          calibration_id: input.calibrationId,
          settings_id: input.settingsId,
          job_id: input.jobId,
          result_json: result,
          derived_bucket: input.derivedBucket,
          derived_key: input.derivedKey,
          software_version: result.software?.version ?? SOFTWARE_VERSION,
          offset_deg: head.offset,
          offset_err_deg: head.err,
          warnings_count: result.warnings.length,
        },
        { transaction },
      );
      if (result.steps.length) {
        await ScanResultStep.bulkCreate(
          result.steps.map((s) => ({
            result_id: row.id,
            step_index: s.index,
            value: finiteOrNull(s.value),
            total_counts: finiteOrNull(s.total_counts),
            offset_deg: finiteOrNull(s.offset_deg),
            offset_err_deg: finiteOrNull(s.offset_err_deg),
            transverse_shift_au: meanTransverse(s.lobes),
            radius_au: finiteOrNull(s.radius_au),
            radius_err_au: finiteOrNull(s.radius_err_au),
            intensity_wcm2: finiteOrNull(s.intensity_from_radius_Wcm2),
            intensity_err_wcm2: finiteOrNull(s.intensity_from_radius_err_Wcm2),
            lobes: s.lobes,
          })),
          { transaction },
        );
      }
      await Scan.update(
        {
          status: 'reduced',
          status_message: result.warnings.length
            ? `Reduced with ${result.warnings.length} warning${result.warnings.length === 1 ? '' : 's'}.`
            : null,
          latest_result_id: row.id,
          offset_deg: head.offset,
          offset_err_deg: head.err,
        },
        { where: { id: input.scan.id }, transaction },
      );
      const now = new Date();
      await DetectorCalibrationVersion.update(
        { locked_at: now },
        { where: { id: input.calibrationId, locked_at: null }, transaction },
      );
      await AnalysisSettingsVersion.update(
        { locked_at: now },
        { where: { id: input.settingsId, locked_at: null }, transaction },
      );
      await ReductionJob.update(
        { status: 'succeeded', progress: 1, error_message: null, finished_at: now },
        { where: { id: input.jobId }, transaction },
      );
      await recordAudit(
        {
          action: 'reduction.completed',
          actorId: input.requestedBy,
          teamId: input.teamId,
          targetType: 'scan',
          targetId: input.scan.id,
          details: {
            resultId: row.id,
            calibrationId: input.calibrationId,
            settingsId: input.settingsId,
            offsetDeg: head.offset,
          },
        },
        { transaction },
      );
      return { resultId: row.id, reusedExisting: false };
    });
  } catch (err) {
    if (err instanceof UniqueConstraintError) {
      // Another worker committed the same versions first (a stalled job that was still running): adopt its row.
      const other = await ScanResult.findOne({
        where: { scan_id: input.scan.id, calibration_id: input.calibrationId, settings_id: input.settingsId },
      });
      if (other) return adoptExistingResult(other, input.jobId);
    }
    throw err;
  }
}

function finiteOrNull(v: number | null | undefined): number | null {
  return v == null || !Number.isFinite(v) ? null : v;
}

function meanTransverse(lobes: LobelineResult['steps'][number]['lobes']): number | null {
  const v = lobes.map((l) => l.transverse_shift_au).filter((x): x is number => x != null && Number.isFinite(x));
  return v.length ? v.reduce((a, b) => a + b, 0) / v.length : null;
}

/**
 * Records a final failure: the job row, the scan's state and message, the audit trail and the e-mail to the team's
 * analysts. Safe to call twice (the second call changes nothing and sends nothing).
 */
export async function markReductionFailed({
  reductionJobId,
  scanId,
  message,
  attempts,
  context,
}: {
  reductionJobId: number;
  scanId: number;
  message: string;
  attempts: number;
  context?: {
    teamId: number;
    campaignId: number;
    title: string | null;
    fileName: string | null;
    calV: number | null;
    setV: number | null;
  } | null;
}): Promise<void> {
  try {
    const scan = await getDb().transaction(async (transaction) => {
      const [changed] = await ReductionJob.update(
        { status: 'failed', error_message: message, finished_at: new Date() },
        { where: { id: reductionJobId, status: ['queued', 'running'] }, transaction },
      );
      if (!changed) return null;
      const row = await Scan.findByPk(scanId, { transaction, lock: transaction.LOCK.UPDATE });
      if (!row) return null;
      // A scan that already has a result keeps showing it; its message says the newer attempt failed.
      const hasResult = row.latest_result_id != null;
      await row.update(
        {
          status: hasResult ? 'reduced' : 'failed',
          status_message: hasResult ? `The latest re-reduction failed: ${message}` : message,
        },
        { transaction },
      );
      return row;
    });
    if (!scan) return;
    const job = await ReductionJob.findByPk(reductionJobId);
    await recordAudit({
      action: 'reduction.failed',
      actorId: job?.requested_by ?? null,
      teamId: scan.team_id,
      targetType: 'scan',
      targetId: scanId,
      outcome: 'failed',
      details: { reductionJobId, message: message.slice(0, 1000), attempts },
    });
    let calV = context?.calV ?? null;
    let setV = context?.setV ?? null;
    if (job && (calV == null || setV == null)) {
      const [c, s] = await Promise.all([
        DetectorCalibrationVersion.findByPk(job.calibration_id, { attributes: ['version'] }),
        AnalysisSettingsVersion.findByPk(job.settings_id, { attributes: ['version'] }),
      ]);
      calV = c?.version ?? null;
      setV = s?.version ?? null;
    }
    const file =
      context?.fileName ??
      (await RawFile.findByPk(scan.raw_file_id, { attributes: ['original_name'] }))?.original_name ??
      null;
    await notifyReductionFailure({
      teamId: scan.team_id,
      campaignId: scan.campaign_id,
      scanId,
      scanTitle: scan.title,
      fileName: file,
      calibrationVersion: calV,
      settingsVersion: setV,
      message,
      attempts,
    });
  } catch (err) {
    jlog.error('could not record the reduction failure', { reductionJobId, scanId, err });
  }
}
