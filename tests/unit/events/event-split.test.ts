/**
 * A large event file split into chunk jobs (lib/queue/event-flow.ts, reduction/events/event-range.ts,
 * lib/jobs/event-merge.ts), without services: the chunk ranges cover every event exactly once; the partial
 * histograms of the ranges, stored as the chunk store stores them (float64 little-endian bytes) and summed by the
 * merge, equal one pass over the file exactly — equality, not a tolerance, because the counts are integers (exact
 * in float64 below 2⁵³, IEEE 754: common practice) — and the merged reduction is the one-pass reduction: the same
 * result JSON and the same calibrated counts in the result file.
 *
 * Truth: the one-pass reduction of the same file by runEventReduction (lib/jobs/engine.ts), which the tests of
 * reduce-events.test.ts hold against the generator's truth (SCIENCE.md §7.7–7.8); and the generator's own count of
 * events per step (reduction/synth/event-file.ts).
 */
import path from 'node:path';
import { beforeAll, describe, expect, it, vi } from 'vitest';

vi.mock('server-only', () => ({}));

const { planEventChunks } = await import('@/lib/queue/event-flow');
const { mergeEventParts } = await import('@/lib/jobs/event-merge');
const { decodeHistogram, encodeHistogram } = await import('@/lib/jobs/event-chunk-store');
const { eventPlanOf } = await import('@/lib/jobs/event-split');
const { runEventReduction } = await import('@/lib/jobs/engine');
const { histogramEventRange } = await import('@/reduction/events/event-range');
const { createEventReducer } = await import('@/reduction/events/reduce-events');
const { analysisSettingsSchema, detectorCalibrationSchema } = await import('@/reduction/formats');
const { openEventFileOrThrow } = await import('@/reduction/hdf5/event-reader');
const { writeSynthEventScan } = await import('@/reduction/synth/event-file');
const { planScan } = await import('@/reduction/synth/model');
const { generatedDir, runtime } = await import('../scanfile/helpers');

type Runtime = Awaited<ReturnType<typeof runtime>>;
let rt: Runtime;
let file: string;
let truthEvents: number[];
const dir = generatedDir('event-split');
const calibration = detectorCalibrationSchema.parse({ center_px: [0, 0], momentum_per_pixel_au: 1 });
const settings = analysisSettingsSchema.parse({
  bootstrap: { resamples: 30, seed: 11 },
  grid: { p_max_au: 2.0, n: 121 },
  events: { laser_axis: '+y', gate_au: { axis: 'laser', range: [-0.15, 0.15] }, chunk_events: 7001 },
});

beforeAll(async () => {
  rt = await runtime();
  file = path.join(dir, 'as-3step.h5');
  const plan = planScan({ kind: 'angular_streaking', steps: 3, size: 96, counts: 8e4, seed: 31, offsetDeg: 4 });
  truthEvents = writeSynthEventScan(rt, file, plan).events_per_step;
});

function calibratedCounts(resultPath: string): Float32Array {
  const f = new rt.File(resultPath, 'r');
  try {
    const ds = f.get('entry/result/calibrated/counts') as InstanceType<Runtime['Dataset']>;
    return Float32Array.from(ds.value as Float32Array);
  } finally {
    f.close();
  }
}

describe('chunk ranges of a split event file', () => {
  it('cover every event exactly once, never cross a step and hold at most the chunk size', () => {
    const stepStart = [0, 10, 10, 35];
    const stepEvents = [10, 0, 25, 7];
    const ranges = planEventChunks(stepStart, stepEvents, 8);
    // by construction (common practice for a partition): contiguous, in order, no gaps, no overlap
    expect(ranges).toEqual([
      { step: 0, start: 0, count: 8 },
      { step: 0, start: 8, count: 2 },
      { step: 2, start: 10, count: 8 },
      { step: 2, start: 18, count: 8 },
      { step: 2, start: 26, count: 8 },
      { step: 2, start: 34, count: 1 },
      { step: 3, start: 35, count: 7 },
    ]);
    expect(() => planEventChunks([0], [5], 0)).toThrow(RangeError);
    expect(() => planEventChunks([0, 1], [5], 2)).toThrow(RangeError);
  });
});

describe('chunked merge of an event file', () => {
  it('equals one pass exactly: histograms, tallies, result JSON and result-file counts', async () => {
    const scan = openEventFileOrThrow(rt, file);
    try {
      expect(scan.events.stepEvents).toEqual(truthEvents);
      const plan = eventPlanOf(scan, { overrides: null, readerWarnings: [], chunkEvents: 30_001 });
      const total = truthEvents.reduce((a, b) => a + b, 0);
      expect(plan.nEvents).toBe(total);
      expect(plan.chunks.length).toBeGreaterThan(3 * 2);
      expect(plan.chunks.reduce((a, c) => a + c.count, 0)).toBe(total);

      // each chunk as a chunk job makes it, through the store's byte format
      const stored: import('@/lib/jobs/event-chunk-store').ChunkPart[] = [];
      for (const [i, range] of plan.chunks.entries()) {
        const part = await histogramEventRange(scan, range, scan.events.spectrometer, settings, 7001);
        const bytes = encodeHistogram(part.hist);
        stored.push({
          chunkIndex: i,
          ...range,
          tally: part.tally,
          gridN: part.gridN,
          hist: decodeHistogram(bytes, part.gridN * part.gridN),
          runs: 1,
        });
      }

      // one pass over each step, in the reader's own chunks
      const one = createEventReducer({
        meta: scan.meta,
        spectrometer: scan.events.spectrometer,
        calibration,
        settings,
      });
      for (let k = 0; k < 3; k++) {
        for (const c of scan.stepChunks(k, 1_000_000)) one.addChunk(k, c);
        const sum = new Float64Array(one.histogram(k).length);
        const tally = { kept: 0, nearNode: 0, gated: 0, outsideGrid: 0, invalid: 0 };
        for (const p of stored.filter((s) => s.step === k)) {
          for (let j = 0; j < sum.length; j++) sum[j] = (sum[j] as number) + (p.hist[j] as number);
          tally.kept += p.tally.kept;
          tally.nearNode += p.tally.nearNode;
          tally.gated += p.tally.gated;
          tally.outsideGrid += p.tally.outsideGrid;
          tally.invalid += p.tally.invalid;
        }
        expect(sum).toEqual(one.histogram(k));
        expect(sum.every((v) => Number.isInteger(v))).toBe(true);
        expect(tally.kept + tally.nearNode + tally.gated + tally.outsideGrid + tally.invalid).toBe(truthEvents[k]);
        expect(tally.kept).toBeGreaterThan(0.2 * (truthEvents[k] ?? 0));
      }

      // the merge job's function against the single job's
      const mergedPath = path.join(dir, 'merged.h5');
      const singlePath = path.join(dir, 'single.h5');
      const merged = await mergeEventParts({
        plan,
        calibration,
        settings,
        sha256: null,
        outPath: mergedPath,
        readPart: async (i) => stored[i] ?? null,
      });
      const single = await runEventReduction({ scan, calibration, settings, sha256: null, outPath: singlePath });
      expect(merged.result.steps).toEqual(single.result.steps);
      expect(merged.result.events).toEqual(single.result.events);
      expect(merged.result.warnings).toEqual(single.result.warnings);
      expect(merged.result.events?.n_events).toBe(total);
      expect(calibratedCounts(mergedPath)).toEqual(calibratedCounts(singlePath));

      // a part that lost events, or one stored for another range, is refused rather than merged
      const short = stored.map((s, i) => (i === 1 ? { ...s, tally: { ...s.tally, kept: s.tally.kept - 1 } } : s));
      await expect(
        mergeEventParts({
          plan,
          calibration,
          settings,
          sha256: null,
          outPath: path.join(dir, 'bad.h5'),
          readPart: async (i) => short[i] ?? null,
        }),
      ).rejects.toThrow(/accounts for/);
      await expect(
        mergeEventParts({
          plan,
          calibration,
          settings,
          sha256: null,
          outPath: path.join(dir, 'bad2.h5'),
          readPart: async (i) => (i === 2 ? null : (stored[i] ?? null)),
        }),
      ).rejects.toThrow(/chunk 3 of .* is missing/);
    } finally {
      scan.close();
    }
  });
});
