// The planning half of a split event file: called by the reduction job (./reduce-scan.ts) once the file is opened
// and checked. Files of at most EVENT_SPLIT_EVENTS events stay in the one job; larger ones become a flow of chunk
// jobs and one merge job (lib/queue/event-flow.ts).
import { getEnv } from '@/lib/env';
import { log } from '@/lib/log';
import { addEventFlow, type EventPlan, planEventChunks } from '@/lib/queue/event-flow';
import { type ReductionJobData, type ReductionJobOutcome, reductionJobId } from '@/lib/queue/reduction-queue';
import { ReductionJob } from '@/models';
import { SOFTWARE_VERSION } from '@/reduction/formats';
import type { EventScanFile } from '@/reduction/hdf5/event-reader';
import { countChunkParts } from './event-chunk-store';

const plog = log.child({ surface: 'reduction', part: 'event-split' });

/** Whether an event file of `nEvents` events is reduced as chunk jobs (more than EVENT_SPLIT_EVENTS). */
export function shouldSplitEvents(nEvents: number): boolean {
  return nEvents > getEnv().EVENT_SPLIT_EVENTS;
}

/** The plan of a split file: chunk ranges of EVENT_CHUNK_JOB_EVENTS and what the merge needs of the file. */
export function eventPlanOf(
  scan: EventScanFile,
  extra: { overrides: Record<string, string | number> | null; readerWarnings: string[]; chunkEvents?: number },
): EventPlan {
  const ev = scan.events;
  return {
    chunks: planEventChunks(ev.stepStart, ev.stepEvents, extra.chunkEvents ?? getEnv().EVENT_CHUNK_JOB_EVENTS),
    meta: scan.meta as unknown as Record<string, unknown>,
    nEvents: ev.nEvents,
    spectrometer: {
      ...ev.spectrometer,
      detector_center_mm: [ev.spectrometer.detector_center_mm[0], ev.spectrometer.detector_center_mm[1]],
    },
    spectrometerSource: { ...ev.spectrometerSource },
    readerWarnings: [...extra.readerWarnings],
    overrides: extra.overrides,
    softwareVersion: SOFTWARE_VERSION,
  };
}

/**
 * Adds the flow of a large event file and points the request at its merge job.
 *
 * @returns the outcome of the planning job (no result yet: the merge job commits it)
 */
export async function handOffEventFile(input: {
  data: ReductionJobData;
  scan: EventScanFile;
  overrides: Record<string, string | number> | null;
  readerWarnings: string[];
}): Promise<ReductionJobOutcome> {
  const { data } = input;
  const plan = eventPlanOf(input.scan, { overrides: input.overrides, readerWarnings: input.readerWarnings });
  const base = reductionJobId(data.scanId, data.calibrationId, data.settingsId);
  const mergeId = await addEventFlow({ data, queueJobId: base, plan });
  // a plan made again (the first planner died after adding the flow) keeps the chunks already stored
  const stored = await countChunkParts({
    reductionJobId: data.reductionJobId,
    calibrationId: data.calibrationId,
    settingsId: data.settingsId,
    softwareVersion: plan.softwareVersion,
  });
  await ReductionJob.update(
    {
      queue_job_id: mergeId,
      chunks_total: plan.chunks.length,
      chunks_done: stored,
      chunks_redone: null,
      progress: 0.05 + 0.85 * (stored / plan.chunks.length),
    },
    { where: { id: data.reductionJobId } },
  );
  plog.info('event file split into chunk jobs', {
    scanId: data.scanId,
    reductionJobId: data.reductionJobId,
    events: plan.nEvents,
    chunks: plan.chunks.length,
    mergeId,
  });
  return { resultId: null, reusedExisting: false, handedOffTo: mergeId };
}
