/**
 * The work of one chunk job of a split event file: events [start, start + count) of one step, read in slices of
 * `sliceEvents` (bounded memory whatever the range), converted and counted onto the momentum grid of the settings
 * (kinematics.ts, SCIENCE.md §7.7–7.8). The partial histograms of all ranges of a file, added with
 * `EventReducer.addHistogram`, equal one pass over the whole file exactly: the counts are integers in float64
 * (exact below 2⁵³), and integer addition does not depend on the order.
 */
import type { AnalysisSettings } from '../formats';
import { cartesianGrid } from '../grids';
import type { EventScanFile } from '../hdf5/event-reader';
import { addTally, type EventTally, emptyTally, histogramEvents, type SpectrometerSi } from './kinematics';
import { eventConversion, eventSettingsOf } from './reduce-events';

export interface EventRange {
  /** Step the range lies in (the range must not leave it). */
  step: number;
  /** Index of the first event in the whole list. */
  start: number;
  count: number;
}

export interface RangeHistogram {
  hist: Float64Array;
  tally: EventTally;
  gridN: number;
}

/**
 * Histograms one range of an opened event file.
 *
 * @param afterSlice - awaited after each slice with events done in the range (lets timers run: lock renewal)
 * @throws RangeError when the range leaves its step or the file
 */
export async function histogramEventRange(
  scan: EventScanFile,
  range: EventRange,
  spectrometer: SpectrometerSi,
  settings: AnalysisSettings,
  sliceEvents: number,
  afterSlice?: (done: number, count: number) => Promise<void> | void,
): Promise<RangeHistogram> {
  const { stepStart, stepEvents } = scan.events;
  const k = range.step;
  if (!Number.isInteger(k) || k < 0 || k >= stepStart.length) throw new RangeError(`step ${k} does not exist`);
  const begin = stepStart[k] as number;
  const end = begin + (stepEvents[k] as number);
  if (!(Number.isInteger(range.start) && Number.isInteger(range.count) && range.count >= 1)) {
    throw new RangeError('a range needs a whole start and a count of at least 1');
  }
  if (range.start < begin || range.start + range.count > end) {
    throw new RangeError(
      `events ${range.start}…${range.start + range.count} are not all in step ${k} (events ${begin}…${end})`,
    );
  }
  if (!(Number.isInteger(sliceEvents) && sliceEvents >= 1)) throw new RangeError('sliceEvents must be ≥ 1');
  const grid = cartesianGrid(settings);
  const hist = new Float64Array(grid.n * grid.n);
  const tally = emptyTally();
  const conv = eventConversion(spectrometer, eventSettingsOf(settings));
  const stop = range.start + range.count;
  for (let a = range.start; a < stop; a += sliceEvents) {
    const c = scan.readEvents(a, Math.min(sliceEvents, stop - a));
    addTally(tally, histogramEvents(c.x, c.y, c.tof, conv, grid, hist));
    await afterSlice?.(Math.min(stop, a + sliceEvents) - range.start, range.count);
  }
  return { hist, tally, gridN: grid.n };
}
