// The bench's fitting tools in the browser worker (issue 15): the pure tools of reduction/bench/ on the bench's
// raw frame (single-pixel corrections as the reducer makes them: excluded pixels masked, background subtracted
// with the shot ratio, flat field divided out). Each answer carries the value, its standard error, a residual
// measure and the tool's own warnings, for the page to show before the analyst accepts it.
import { findCentreBySymmetry, SYMMETRY_REASONS, symmetryForKind } from '@/reduction/bench/centre-symmetry';
import { fitDetectorEllipse } from '@/reduction/bench/ellipse-fit';
import { findHotPixels } from '@/reduction/bench/hot-pixels';
import { fitRing } from '@/reduction/bench/ring-fit';
import { backgroundScale, buildInverseGain, buildPixelMask } from '@/reduction/calibration';
import type { DetectorCalibration } from '@/reduction/formats';
import type { BenchFrame } from './compute';

export type BenchTool = 'centre' | 'hot-pixels' | 'ring' | 'ellipse';

export type ToolAnswer =
  | {
      tool: 'centre';
      symmetry: string;
      reason: string;
      x: number;
      y: number;
      errX: number;
      errY: number;
      chi2PerPixel: number;
      residualRms: number;
      converged: boolean;
      warnings: string[];
    }
  | { tool: 'hot-pixels'; pixels: [number, number][]; expectedFalseAlarms: number; warnings: string[] }
  | {
      tool: 'ring';
      x: number;
      y: number;
      r: number;
      errX: number;
      errY: number;
      errR: number;
      coverageDeg: number;
      points: number;
      residualRms: number;
      warnings: string[];
    }
  | {
      tool: 'ellipse';
      ratio: number;
      axisDeg: number;
      errRatio: number;
      errAxisDeg: number;
      points: number;
      residualRms: number;
      warnings: string[];
    };

/** Where the ring tools look: an annulus of ±35 % about a radius guess (px), centred on the calibration's centre. */
export const RING_ANNULUS = 0.35;

/** Counts with the single-pixel corrections (for the tools) and the mask of the pixels in use. */
export function correctedFrame(frame: BenchFrame, cal: DetectorCalibration) {
  const { nX, nY } = frame.meta.shape;
  const { mask } = buildPixelMask(cal, nX, nY);
  const invGain = buildInverseGain(cal, nX, nY);
  let k = 0;
  if (frame.background && cal.background.subtract) {
    const bg = frame.meta.background;
    k = backgroundScale(
      cal,
      frame.meta.shots[frame.step] ?? 1,
      bg ? (bg.shots[bg.layout === 'per_step' ? frame.step : 0] ?? 1) : 1,
    );
  }
  const counts = new Float64Array(nX * nY);
  for (let p = 0; p < counts.length; p++) {
    if (mask[p] === 0) continue;
    let v = frame.counts[p]!;
    if (k !== 0 && frame.background) v -= k * frame.background[p]!;
    if (invGain) v *= invGain[p]!;
    counts[p] = v;
  }
  return { nX, nY, counts, mask };
}

/**
 * Runs one tool.
 *
 * @throws {RangeError} when no symmetry method is valid for the scan's kind (the message says why), or from the tool
 */
export function runTool(
  frame: BenchFrame,
  cal: DetectorCalibration,
  tool: BenchTool,
  ringPx: number | null = null,
): ToolAnswer {
  const kind = frame.meta.experimentKind;
  if (tool === 'centre') {
    const symmetry = symmetryForKind(kind);
    if (symmetry === null) throw new RangeError(SYMMETRY_REASONS[kind]);
    const f = correctedFrame(frame, cal);
    const r = findCentreBySymmetry(f, {
      symmetry,
      kind,
      calibration: cal,
      axisDeg: frame.meta.majorAxisAngleDeg,
      startPx: cal.center_px,
    });
    return {
      tool,
      symmetry,
      reason: SYMMETRY_REASONS[kind],
      x: r.value.x,
      y: r.value.y,
      errX: r.stdErr.x,
      errY: r.stdErr.y,
      chi2PerPixel: r.diagnostics.chi2PerPixel,
      residualRms: r.residual.rms,
      converged: r.diagnostics.converged,
      warnings: r.warnings,
    };
  }
  if (tool === 'ring' || tool === 'ellipse') {
    if (!(ringPx !== null && ringPx > 2)) {
      throw new RangeError('The ring tools need a ring: the bench has not found a radius for this step yet.');
    }
    const f = correctedFrame(frame, cal);
    const annulus = {
      centrePx: cal.center_px,
      rMinPx: ringPx * (1 - RING_ANNULUS),
      rMaxPx: ringPx * (1 + RING_ANNULUS),
    };
    if (tool === 'ring') {
      const r = fitRing({ frame: f, annulus });
      return {
        tool,
        x: r.value.x,
        y: r.value.y,
        r: r.value.r,
        errX: r.stdErr.x,
        errY: r.stdErr.y,
        errR: r.stdErr.r,
        coverageDeg: r.diagnostics.coverageDeg,
        points: r.diagnostics.points,
        residualRms: r.residual.rms,
        warnings: r.warnings,
      };
    }
    const e = fitDetectorEllipse({ frame: f, annulus }, { kind, ellipticity: frame.meta.ellipticity });
    return {
      tool,
      ratio: e.value.ratio,
      axisDeg: e.value.axisDeg,
      errRatio: e.stdErr.ratio,
      errAxisDeg: e.stdErr.axisDeg,
      points: e.diagnostics.points,
      residualRms: e.residual.rms,
      warnings: e.warnings,
    };
  }
  // hot pixels on the raw counts (a background frame is not subtracted: the test is on Poisson counts)
  const { nX, nY } = frame.meta.shape;
  const { mask } = buildPixelMask(cal, nX, nY);
  const r = findHotPixels({ nX, nY, counts: frame.counts, mask });
  return { tool, pixels: r.value.pixels, expectedFalseAlarms: r.stdErr.expectedFalseAlarms, warnings: r.warnings };
}
