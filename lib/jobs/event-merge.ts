// The merge (parent) job of a split event file (lib/queue/event-flow.ts). BullMQ starts it only when every chunk
// job has completed. It reads the stored part of each chunk once, in chunk order, adds it to its step's histogram
// (EventReducer.addHistogram: integer counts in float64, so the sum equals one pass over the file exactly), runs the
// analysis of the image reducer on each step's histogram (lobes, offsets, radius, intensity, phase analysis for
// two-colour files, the Poisson bootstrap of SCIENCE.md §9.2), writes the result file and commits it as
// ./reduce-scan.ts does. Memory: one chunk part and one step histogram at a time.
import { createReadStream } from 'node:fs';
import { mkdtemp, rm, stat } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { getDb } from '@/lib/db';
import { log } from '@/lib/log';
import type { EventMergeJobData } from '@/lib/queue/event-flow';
import { type ReductionJobOutcome, reductionBackoffMs } from '@/lib/queue/reduction-queue';
import { buckets, putObject } from '@/lib/storage/s3';
import {
  AnalysisSettingsVersion,
  DetectorCalibrationVersion,
  RawFile,
  ReductionJob,
  Scan,
  ScanResult,
  Team,
} from '@/models';
import type { SpectrometerSi } from '@/reduction/events/kinematics';
import { createEventReducer } from '@/reduction/events/reduce-events';
import type { AnalysisSettings, AnyCalibration, LobelineResult, ScanMetadata } from '@/reduction/formats';
import { loadH5wasmNode } from '@/reduction/hdf5/node';
import { ResultFileWriter } from '@/reduction/hdf5/result-writer';
import { type ChunkPart, type ChunkPartKey, chunkRuns, deleteChunkParts, readChunkPart } from './event-chunk-store';
import { describeAttempt, explainFailure, ReductionRefusedError } from './failure';
import { preflightEvents } from './preflight';
import {
  adoptExistingResult,
  commitResult,
  derivedResultKey,
  type JobContext,
  markReductionFailed,
} from './reduce-scan';

const mlog = log.child({ surface: 'reduction', part: 'event-merge' });

export interface MergeInput {
  plan: EventMergeJobData['plan'];
  calibration: AnyCalibration;
  settings: AnalysisSettings;
  sha256: string | null;
  outPath: string;
  /** The stored part of chunk i (or null when it is missing). */
  readPart: (index: number) => Promise<ChunkPart | null>;
  onChunk?: (done: number, total: number) => Promise<void> | void;
}

/**
 * Sums the chunk parts per step and reduces the histograms into a result file (FORMATS §5).
 *
 * @throws ReductionRefusedError when a part is missing or does not hold the range the plan gave its chunk
 */
export async function mergeEventParts(input: MergeInput): Promise<{ result: LobelineResult }> {
  const { plan } = input;
  const meta = plan.meta as unknown as ScanMetadata;
  const rt = await loadH5wasmNode();
  let writer: ResultFileWriter | null = null;
  try {
    const reducer = createEventReducer({
      meta,
      spectrometer: plan.spectrometer as SpectrometerSi,
      spectrometerSource: plan.spectrometerSource,
      calibration: input.calibration,
      settings: input.settings,
      sha256: input.sha256,
      onStepArrays: (k, arrays) => writer?.writeStep(k, arrays),
    });
    writer = ResultFileWriter.create(rt, input.outPath, {
      nStep: meta.shape.nStep,
      step: meta.step,
      pxAu: reducer.axes.pxAu,
      pyAu: reducer.axes.pyAu,
      thetaDeg: reducer.axes.thetaDeg,
      pAu: reducer.axes.pAu,
    });
    const byStep = new Map<number, number[]>();
    plan.chunks.forEach((c, i) => {
      const list = byStep.get(c.step) ?? [];
      list.push(i);
      byStep.set(c.step, list);
    });
    let done = 0;
    for (let k = 0; k < meta.shape.nStep; k++) {
      for (const i of byStep.get(k) ?? []) {
        const want = plan.chunks[i]!;
        const part = await input.readPart(i);
        if (!part) {
          throw new ReductionRefusedError(
            `The partial histogram of chunk ${i + 1} of ${plan.chunks.length} is missing; reduce the scan again.`,
          );
        }
        if (part.step !== want.step || part.start !== want.start || part.count !== want.count) {
          throw new ReductionRefusedError(
            `The stored chunk ${i + 1} holds events ${part.start}…${part.start + part.count} of step ${part.step}, ` +
              `not the planned ${want.start}…${want.start + want.count} of step ${want.step}; reduce the scan again.`,
          );
        }
        const counted =
          part.tally.kept + part.tally.nearNode + part.tally.gated + part.tally.outsideGrid + part.tally.invalid;
        if (counted !== part.count) {
          throw new ReductionRefusedError(
            `The stored chunk ${i + 1} accounts for ${counted} events, not its ${part.count}; reduce the scan again.`,
          );
        }
        reducer.addHistogram(k, part.hist, part.tally);
        done++;
        await input.onChunk?.(done, plan.chunks.length);
        await new Promise((resolve) => setImmediate(resolve));
      }
      reducer.finishStep(k);
      await new Promise((resolve) => setImmediate(resolve));
    }
    const { result, phaseMaps } = reducer.finish();
    if (plan.overrides && Object.keys(plan.overrides).length) result.input.overrides = { ...plan.overrides };
    if (plan.readerWarnings.length) result.warnings = [...plan.readerWarnings, ...result.warnings];
    if (phaseMaps !== null) writer.writePhase(phaseMaps);
    writer.writeSummary(result);
    writer.close();
    writer = null;
    return { result };
  } finally {
    try {
      writer?.close();
    } catch {
      // the caller removes its work folder
    }
  }
}

/**
 * Runs the merge job of a split event file.
 *
 * @throws the original error for transient problems (BullMQ retries), ReductionRefusedError for permanent ones
 */
export async function processEventMerge(data: EventMergeJobData, ctx: JobContext): Promise<ReductionJobOutcome> {
  getDb();
  const { scanId, calibrationId, settingsId, reductionJobId, plan } = data;
  const job = await ReductionJob.findByPk(reductionJobId);
  if (!job) throw new ReductionRefusedError(`The reduction request ${reductionJobId} no longer exists.`);
  if (job.status === 'failed') {
    throw new ReductionRefusedError(`The reduction request ${reductionJobId} was already closed as failed.`);
  }
  const existing = await ScanResult.findOne({
    where: { scan_id: scanId, calibration_id: calibrationId, settings_id: settingsId },
  });
  if (existing) return adoptExistingResult(existing, job.id);
  let workDir: string | null = null;
  try {
    const scan = await Scan.findByPk(scanId);
    if (!scan) throw new ReductionRefusedError('The scan was deleted before it could be reduced.');
    const [file, team, cal, set] = await Promise.all([
      RawFile.findByPk(scan.raw_file_id),
      Team.findByPk(scan.team_id, { attributes: ['slug'] }),
      DetectorCalibrationVersion.findByPk(calibrationId),
      AnalysisSettingsVersion.findByPk(settingsId),
    ]);
    if (!file) throw new ReductionRefusedError('The raw file of this scan is no longer stored.');
    if (!cal || !set) throw new ReductionRefusedError('The chosen calibration or settings version no longer exists.');
    if (!team) throw new ReductionRefusedError('The scan’s team no longer exists.');
    const { calibration, settings } = preflightEvents(cal.body, set.body, {
      calibration: `calibration v${cal.version}`,
      settings: `settings v${set.version}`,
    });
    await job.update({ status: 'running', chunks_done: plan.chunks.length, progress: 0.9 });
    const key: ChunkPartKey = { reductionJobId, calibrationId, settingsId, softwareVersion: plan.softwareVersion };
    const runs = await chunkRuns(reductionJobId);
    workDir = await mkdtemp(path.join(tmpdir(), `lobeline-merge-${scanId}-`));
    const outPath = path.join(workDir, 'result.h5');
    const { result } = await mergeEventParts({
      plan,
      calibration,
      settings,
      sha256: file.sha256,
      outPath,
      readPart: (i) => readChunkPart(key, i),
    });
    const derivedKey = derivedResultKey(team.slug, scanId, calibrationId, settingsId);
    const derivedBucket = buckets().derived;
    await putObject({
      bucket: derivedBucket,
      key: derivedKey,
      body: createReadStream(outPath),
      contentLength: (await stat(outPath)).size,
      contentType: 'application/x-hdf5',
      metadata: { scan: String(scanId), calibration: String(calibrationId), settings: String(settingsId) },
    });
    await ctx.updateProgress(95);
    let redone = 0;
    for (const r of runs.values()) redone += Math.max(0, r - 1);
    await ReductionJob.update({ chunks_redone: redone }, { where: { id: reductionJobId } });
    const outcome = await commitResult({
      scan,
      rawFileId: file.id,
      calibrationId,
      settingsId,
      jobId: job.id,
      result,
      derivedBucket,
      derivedKey,
      teamId: scan.team_id,
      requestedBy: job.requested_by,
    });
    // The parts have served their purpose; a failure to remove them only leaves rows behind.
    await deleteChunkParts(reductionJobId).catch((err) => mlog.warn('chunk parts not removed', { err }));
    await ctx.updateProgress(100);
    mlog.info('split event reduction finished', {
      scanId,
      reductionJobId,
      chunks: plan.chunks.length,
      redone,
      resultId: outcome.resultId,
    });
    return outcome;
  } catch (err) {
    const ex = explainFailure(err);
    const attemptNo = ctx.attemptsMade + 1;
    const outcome = describeAttempt(ex, attemptNo, ctx.maxAttempts, reductionBackoffMs(attemptNo));
    mlog.warn('merge attempt failed', { scanId, reductionJobId, attemptNo, final: outcome.final, err });
    if (outcome.final) {
      await markReductionFailed({ reductionJobId, scanId, message: outcome.jobMessage, attempts: attemptNo });
      await deleteChunkParts(reductionJobId).catch(() => undefined);
    }
    if (ex.transient && !outcome.final) throw err;
    throw err instanceof ReductionRefusedError ? err : new ReductionRefusedError(outcome.jobMessage);
  } finally {
    if (workDir) await rm(workDir, { recursive: true, force: true }).catch(() => undefined);
  }
}
