// Large event files spread over workers with a BullMQ flow (FORMATS §1.1; the job side is in
// lib/jobs/event-chunk.ts and lib/jobs/event-merge.ts).
//
// The reduction job of an event file with more than EVENT_SPLIT_EVENTS events does not histogram the events itself:
// it plans chunks (contiguous event ranges that never cross a step boundary, at most EVENT_CHUNK_JOB_EVENTS each)
// and adds one flow: the chunk jobs are children on `lobeline-event-chunks`, any number of chunk workers on any
// number of machines take them; the parent is a `merge-events` job on the reduction queue itself, which BullMQ
// starts only when every child has completed. A chunk stores its partial histogram under a deterministic key
// (event_chunk_parts: request, versions, chunk index), so a chunk that runs twice (its worker was killed and the
// stalled-job check gave the chunk to another worker) overwrites its own part, and the merge sums each chunk once.
//
// Job ids are deterministic too (`<reduction job id>-merge-r<request>` and `…-c<index>`): a planner that runs again
// adds nothing new. The reduction_jobs row's queue_job_id points at the merge job, so the lost-job sweep
// (lib/jobs/sweep.ts) sees the request as held while the merge waits for its children ('waiting-children').
import { FlowProducer } from 'bullmq';
import { z } from 'zod';
import { AppError } from '@/lib/errors';
import { createRedisConnection } from './connection';
import {
  REDUCTION_ATTEMPTS,
  REDUCTION_BACKOFF_TYPE,
  REDUCTION_QUEUE,
  type ReductionJobData,
  reductionJobDataSchema,
} from './reduction-queue';

/** Queue of the chunk jobs. */
export const EVENT_CHUNK_QUEUE = 'lobeline-event-chunks';
/** Name of the parent (merge) job on the reduction queue. */
export const EVENT_MERGE_JOB = 'merge-events';
/** Name of a chunk job. */
export const EVENT_CHUNK_JOB = 'histogram-chunk';

/** One chunk: events [start, start + count) of the file, all in step `step`. */
export interface EventChunkRange {
  step: number;
  start: number;
  count: number;
}

const spectrometerSchema = z.object({
  acceleration_length_m: z.number(),
  drift_length_m: z.number(),
  electric_field_v_per_m: z.number(),
  magnetic_field_t: z.number(),
  t0_ns: z.number(),
  detector_center_mm: z.tuple([z.number(), z.number()]),
});

const rangeSchema = z.object({
  step: z.number().int().min(0),
  start: z.number().int().min(0),
  count: z.number().int().min(1),
});

/** Payload of a chunk job. */
export const eventChunkJobDataSchema = reductionJobDataSchema.extend({
  chunkIndex: z.number().int().min(0),
  chunks: z.number().int().min(1),
  range: rangeSchema,
  /** The spectrometer values the planner resolved (the file's with the calibration's over them), SI units. */
  spectrometer: spectrometerSchema,
  /** Software version of the planner: part of the chunk's storage key. */
  softwareVersion: z.string().min(1).max(32),
});
export type EventChunkJobData = z.infer<typeof eventChunkJobDataSchema>;

/** The plan the merge job needs (everything it would otherwise have to open the raw file for). */
export const eventPlanSchema = z.object({
  chunks: z.array(rangeSchema).min(1),
  /** ScanMetadata of the event file (reduction/formats.ts), as the reader produced it. */
  meta: z.record(z.string(), z.unknown()),
  nEvents: z.number().int().min(1),
  spectrometer: spectrometerSchema,
  spectrometerSource: z.record(z.string(), z.enum(['file', 'calibration', 'default'])),
  readerWarnings: z.array(z.string()),
  overrides: z.record(z.string(), z.union([z.string(), z.number()])).nullable(),
  softwareVersion: z.string().min(1).max(32),
});
export type EventPlan = z.infer<typeof eventPlanSchema>;

export const eventMergeJobDataSchema = reductionJobDataSchema.extend({ plan: eventPlanSchema });
export type EventMergeJobData = z.infer<typeof eventMergeJobDataSchema>;

/**
 * Splits the steps of an event file into chunk ranges of at most `chunkEvents` events; no range crosses a step
 * boundary and empty steps get no range. Pure.
 *
 * @param stepStart - index of the first event of each step
 * @param stepEvents - events of each step
 * @param chunkEvents - the most events in one chunk (≥ 1)
 */
export function planEventChunks(stepStart: number[], stepEvents: number[], chunkEvents: number): EventChunkRange[] {
  if (stepStart.length !== stepEvents.length) throw new RangeError('stepStart and stepEvents differ in length');
  if (!(Number.isInteger(chunkEvents) && chunkEvents >= 1)) throw new RangeError('chunkEvents must be ≥ 1');
  const out: EventChunkRange[] = [];
  for (let k = 0; k < stepStart.length; k++) {
    const begin = stepStart[k] as number;
    const end = begin + (stepEvents[k] as number);
    for (let a = begin; a < end; a += chunkEvents)
      out.push({ step: k, start: a, count: Math.min(chunkEvents, end - a) });
  }
  return out;
}

/** Id of the merge job of a request (deterministic: a second plan of the same request adds nothing). */
export function eventMergeJobId(queueJobId: string, reductionJobId: number): string {
  return `${queueJobId}-merge-r${reductionJobId}`;
}

/** Id of chunk `index` of a merge job. */
export function eventChunkJobId(mergeJobId: string, index: number): string {
  return `${mergeJobId}-c${index}`;
}

type Cache = { producer?: FlowProducer };
const g = globalThis as typeof globalThis & { __lobelineEventFlow?: Cache };
if (!g.__lobelineEventFlow) g.__lobelineEventFlow = {};
const state: Cache = g.__lobelineEventFlow;

function producer(): FlowProducer {
  if (!state.producer) state.producer = new FlowProducer({ connection: createRedisConnection('event-flow') });
  return state.producer;
}

/**
 * Adds the flow of one split event file: a merge job on the reduction queue with one chunk child per range.
 *
 * @returns the merge job's id
 * @throws AppError `unavailable:queue` when Redis does not take the flow
 */
export async function addEventFlow(input: {
  data: ReductionJobData;
  queueJobId: string;
  plan: EventPlan;
}): Promise<string> {
  const mergeId = eventMergeJobId(input.queueJobId, input.data.reductionJobId);
  const opts = {
    attempts: REDUCTION_ATTEMPTS,
    backoff: { type: REDUCTION_BACKOFF_TYPE },
    removeOnComplete: true,
    removeOnFail: true,
  };
  const merge: EventMergeJobData = { ...input.data, plan: input.plan };
  try {
    await producer().add({
      name: EVENT_MERGE_JOB,
      queueName: REDUCTION_QUEUE,
      data: merge,
      opts: { ...opts, jobId: mergeId },
      children: input.plan.chunks.map((range, i) => ({
        name: EVENT_CHUNK_JOB,
        queueName: EVENT_CHUNK_QUEUE,
        data: {
          ...input.data,
          chunkIndex: i,
          chunks: input.plan.chunks.length,
          range,
          spectrometer: input.plan.spectrometer,
          softwareVersion: input.plan.softwareVersion,
        } satisfies EventChunkJobData,
        // A chunk that fails for good fails the merge (and the request, lib/jobs/event-chunk.ts records why).
        opts: { ...opts, jobId: eventChunkJobId(mergeId, i), failParentOnFailure: true },
      })),
    });
  } catch (err) {
    throw new AppError('unavailable:queue', { cause: err, retryAfterSeconds: 60 });
  }
  return mergeId;
}

/** Closes this process's flow producer (its Redis connection ends with closeQueueConnections). */
export async function closeEventFlow(): Promise<void> {
  const p = state.producer;
  state.producer = undefined;
  if (p) await p.close();
}
