// Checks of a calibration and settings version against the scan it is about to reduce, before any frame is read.
// Each problem is a sentence a physicist reads without the code: which number, what it should be, what it is.

import { formatNumber } from '@/lib/format';
import type { AnalysisSettings, AnyCalibration, DetectorCalibration, ScanMetadata } from '@/reduction/formats';
import { isEventOnlyCalibration, parseAnyCalibration, parseCalibration, parseSettings } from '@/reduction/formats';
import { ReductionRefusedError } from './failure';

const fmt = (v: number) =>
  Math.abs(v) >= 1e5
    ? formatNumber(v, 4)
    : Math.abs(v) >= 1000 || Number.isInteger(v)
      ? String(Math.round(v * 100) / 100)
      : v.toPrecision(4);

/**
 * Parses both versions and checks them against the file's metadata.
 *
 * @throws ReductionRefusedError listing every problem
 */
export function preflight(
  meta: ScanMetadata,
  calibrationBody: unknown,
  settingsBody: unknown,
  labels: { calibration: string; settings: string },
): { calibration: DetectorCalibration; settings: AnalysisSettings } {
  if (isEventOnlyCalibration(calibrationBody)) {
    throw new ReductionRefusedError(
      `${labels.calibration} is a calibration for event files (spectrometer values only, no detector centre or ` +
        'momentum scale); this scan is a detector image. Reduce it with an image calibration of the campaign.',
    );
  }
  const c = parseCalibration(calibrationBody);
  const s = parseSettings(settingsBody);
  const problems: string[] = [];
  if (!c.ok) problems.push(...c.problems.map((p) => `${labels.calibration}: ${p}`));
  if (!s.ok) problems.push(...s.problems.map((p) => `${labels.settings}: ${p}`));
  if (!c.ok || !s.ok) {
    throw new ReductionRefusedError('The stored calibration or settings version is not valid:', problems);
  }
  const cal = c.value;
  const set = s.value;
  const { nX, nY } = meta.shape;
  const [x0, y0] = cal.center_px;
  if (x0 < 0 || x0 > nX - 1 || y0 < 0 || y0 > nY - 1) {
    problems.push(
      `the calibration centre (x ${fmt(x0)}, y ${fmt(y0)} px) lies outside the detector, which is ${nX} × ${nY} pixels ` +
        `(x 0…${nX - 1}, y 0…${nY - 1}); check center_px of ${labels.calibration}`,
    );
  }
  const outside = cal.bad_pixels.filter(([x, y]) => x >= nX || y >= nY);
  if (outside.length) {
    const [x, y] = outside[0] ?? [0, 0];
    problems.push(
      `${outside.length} bad pixel(s) of ${labels.calibration} lie outside the ${nX} × ${nY} detector (first: x ${x}, y ${y})`,
    );
  }
  if (cal.flat_field) {
    const g = cal.flat_field.gain;
    const cols = g[0]?.length ?? 0;
    if (g.length !== nY || g.some((row) => row.length !== nX)) {
      problems.push(
        `the flat-field gain map of ${labels.calibration} is ${g.length} × ${cols} (rows × columns) but the detector ` +
          `frames are ${nY} × ${nX}`,
      );
    }
  }
  if (Array.isArray(set.radial_window_au) && set.radial_window_au[1] > set.grid.p_max_au) {
    problems.push(
      `the radial window of ${labels.settings} ends at ${fmt(set.radial_window_au[1])} a.u., beyond the momentum grid ` +
        `(p_max ${fmt(set.grid.p_max_au)} a.u.); raise “Momentum grid half-width” in the analysis settings or lower “Radial window to”`,
    );
  }
  // The detector's reach in momentum: half the shorter side times the scale. A grid far larger only costs time; a
  // grid that misses most of the detector is worth a sentence.
  const reach = (Math.min(nX, nY) / 2) * cal.momentum_per_pixel_au;
  if (set.grid.p_max_au < reach / 20) {
    problems.push(
      `the momentum grid of ${labels.settings} (p_max ${fmt(set.grid.p_max_au)} a.u.) covers less than 5 % of the ` +
        `detector's reach (about ${fmt(reach)} a.u. with ${fmt(cal.momentum_per_pixel_au)} a.u. per pixel); ` +
        'check “Momentum per pixel” in the detector calibration',
    );
  }
  if (
    meta.background &&
    cal.background.subtract &&
    cal.background.scale_by === 'shots' &&
    cal.background.factor === undefined
  ) {
    if (meta.background.shots.some((v) => !(v > 0))) {
      problems.push(
        'the background frames state zero shots, so they cannot be scaled by shots; set background.scale_by to "none"',
      );
    }
  }
  if (problems.length) {
    throw new ReductionRefusedError(
      problems.length === 1
        ? `The reduction cannot start: ${problems[0]}.`
        : 'The reduction cannot start because the chosen versions do not fit this scan:',
      problems.length === 1 ? [] : problems,
    );
  }
  return { calibration: cal, settings: set };
}

/**
 * The checks of `preflight` that apply to an event file: both versions parse, and the radial window lies on the
 * grid. The calibration's detector geometry (centre, bad pixels, flat field) does not apply to events; its
 * `spectrometer` values were already applied by the reader.
 *
 * @throws ReductionRefusedError listing every problem
 */
export function preflightEvents(
  calibrationBody: unknown,
  settingsBody: unknown,
  labels: { calibration: string; settings: string },
): { calibration: AnyCalibration; settings: AnalysisSettings } {
  const c = parseAnyCalibration(calibrationBody);
  const s = parseSettings(settingsBody);
  const problems: string[] = [];
  if (!c.ok) problems.push(...c.problems.map((p) => `${labels.calibration}: ${p}`));
  if (!s.ok) problems.push(...s.problems.map((p) => `${labels.settings}: ${p}`));
  if (!c.ok || !s.ok) {
    throw new ReductionRefusedError('The stored calibration or settings version is not valid:', problems);
  }
  const set = s.value;
  if (Array.isArray(set.radial_window_au) && set.radial_window_au[1] > set.grid.p_max_au) {
    throw new ReductionRefusedError(
      `The reduction cannot start: the radial window of ${labels.settings} ends at ${fmt(set.radial_window_au[1])} a.u., ` +
        `beyond the momentum grid (p_max ${fmt(set.grid.p_max_au)} a.u.); raise “Momentum grid half-width” in the analysis settings or lower “Radial window to”.`,
    );
  }
  return { calibration: c.value, settings: set };
}
