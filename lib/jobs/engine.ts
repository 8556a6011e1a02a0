// The numerical part of a job: frames of an opened scan through `createScanReducer`, each step's arrays straight
// into the result file (FORMATS §5), then the phase maps and the summary. Only one frame (and its background) is
// held at a time; the reducer and the writer keep their own bounded state (N6).

import { createEventReducer } from '@/reduction/events/reduce-events';
import type { AnalysisSettings, AnyCalibration, DetectorCalibration, LobelineResult } from '@/reduction/formats';
import type { EventScanFile } from '@/reduction/hdf5/event-reader';
import { loadH5wasmNode } from '@/reduction/hdf5/node';
import type { ScanFile } from '@/reduction/hdf5/reader';
import { ResultFileWriter } from '@/reduction/hdf5/result-writer';
import { createScanReducer } from '@/reduction/pipeline';

export interface RunReductionInput {
  scan: ScanFile;
  calibration: DetectorCalibration;
  settings: AnalysisSettings;
  sha256: string | null;
  /** Path of the result file to write (the module's real file system, Node). */
  outPath: string;
  /** Analyst corrections applied over the file's metadata (result names), recorded as `input.overrides`. */
  overrides?: Record<string, string | number> | null;
  /** Warnings of the reader, put first in the result. */
  readerWarnings?: string[];
  /** Called after each step (awaited: the event loop runs between steps, so the queue lock is renewed). */
  onStep?: (done: number, total: number) => Promise<void> | void;
}

/** Reduces every step and writes the result file; returns the result JSON (FORMATS §4). */
export async function runReduction(
  input: RunReductionInput,
): Promise<{ result: LobelineResult; hasPhaseMaps: boolean }> {
  const rt = await loadH5wasmNode();
  const meta = input.scan.meta;
  let writer: ResultFileWriter | null = null;
  try {
    const reducer = createScanReducer({
      meta,
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
    const n = meta.shape.nY * meta.shape.nX;
    const frame = new Float64Array(n);
    const bg = meta.background !== null && input.calibration.background.subtract ? new Float64Array(n) : null;
    const total = meta.shape.nStep;
    for (let k = 0; k < total; k++) {
      input.scan.readFrame(k, frame);
      const b = bg === null ? null : input.scan.readBackground(k, bg);
      reducer.addStep(k, frame, b);
      await input.onStep?.(k + 1, total);
      // Let timers (lock renewal, progress writes) run between CPU-heavy steps.
      await new Promise((resolve) => setImmediate(resolve));
    }
    const { result, phaseMaps } = reducer.finish();
    if (input.overrides && Object.keys(input.overrides).length) result.input.overrides = { ...input.overrides };
    if (input.readerWarnings?.length) result.warnings = [...input.readerWarnings, ...result.warnings];
    if (phaseMaps !== null) writer.writePhase(phaseMaps);
    writer.writeSummary(result);
    writer.close();
    writer = null;
    return { result, hasPhaseMaps: phaseMaps !== null };
  } finally {
    try {
      writer?.close();
    } catch {
      // the caller removes its work folder
    }
  }
}

export interface RunEventReductionInput extends Omit<RunReductionInput, 'scan' | 'onStep' | 'calibration'> {
  scan: EventScanFile;
  /** The calibration version (an image one, or one for event files only; only `spectrometer` applies). */
  calibration: AnyCalibration;
  /** Called after each chunk with events done and events in all (awaited, like `onStep`). */
  onEvents?: (done: number, total: number) => Promise<void> | void;
}

/**
 * Reduces an event file (FORMATS §1.1): per step the events are read in chunks of `events.chunk_events`, converted
 * and counted on the momentum grid, and each step's histogram goes through the image reducer as a virtual frame
 * (reduction/events/reduce-events.ts). Memory: one chunk and one histogram per step in progress.
 */
export async function runEventReduction(
  input: RunEventReductionInput,
): Promise<{ result: LobelineResult; hasPhaseMaps: boolean }> {
  const rt = await loadH5wasmNode();
  const meta = input.scan.meta;
  let writer: ResultFileWriter | null = null;
  try {
    const reducer = createEventReducer({
      meta,
      spectrometer: input.scan.events.spectrometer,
      spectrometerSource: input.scan.events.spectrometerSource,
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
    const chunk = reducer.eventSettings.chunk_events;
    const total = input.scan.events.nEvents;
    let done = 0;
    for (let k = 0; k < meta.shape.nStep; k++) {
      for (const c of input.scan.stepChunks(k, chunk)) {
        reducer.addChunk(k, c);
        done += c.x.length;
        await input.onEvents?.(done, total);
        // Let timers (lock renewal, progress writes) run between chunks.
        await new Promise((resolve) => setImmediate(resolve));
      }
      reducer.finishStep(k);
      await new Promise((resolve) => setImmediate(resolve));
    }
    const { result, phaseMaps } = reducer.finish();
    if (input.overrides && Object.keys(input.overrides).length) result.input.overrides = { ...input.overrides };
    if (input.readerWarnings?.length) result.warnings = [...input.readerWarnings, ...result.warnings];
    if (phaseMaps !== null) writer.writePhase(phaseMaps);
    writer.writeSummary(result);
    writer.close();
    writer = null;
    return { result, hasPhaseMaps: phaseMaps !== null };
  } finally {
    try {
      writer?.close();
    } catch {
      // the caller removes its work folder
    }
  }
}
