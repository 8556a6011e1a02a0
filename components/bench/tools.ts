// The bench's fitting tools in the browser worker (issue 15): the pure tools of reduction/bench/ on the bench's
// raw frame (single-pixel corrections as the reducer makes them: excluded pixels masked, background subtracted
// with the shot ratio, flat field divided out). Each answer carries the value, its standard error, a residual
// measure and the tool's own warnings, for the page to show before the analyst accepts it.
import { atiRingRadii, fitAtiScale } from '@/reduction/bench/ati-scale';
import { fitBackgroundScale } from '@/reduction/bench/background-scale';
import { findCentreBySymmetry, SYMMETRY_REASONS, symmetryForKind } from '@/reduction/bench/centre-symmetry';
import { fitDetectorEllipse } from '@/reduction/bench/ellipse-fit';
import { findHotPixels } from '@/reduction/bench/hot-pixels';
import { fitRing } from '@/reduction/bench/ring-fit';
import { fitRotationFromReference } from '@/reduction/bench/rotation';
import { backgroundScale, buildInverseGain, buildPixelMask } from '@/reduction/calibration';
import type { DetectorCalibration } from '@/reduction/formats';
import type { BenchFrame } from './compute';
import { type RingSuggestion, radialDensity, ringWindowPx, suggestRingPeaks } from './radial-peaks';

export type BenchTool =
  | 'centre'
  | 'hot-pixels'
  | 'ring'
  | 'ellipse'
  | 'ring-suggest'
  | 'ati-scale'
  | 'background-scale'
  | 'rotation';

/** A rectangle on the raw frame, inclusive pixel bounds. */
export interface PixelRect {
  x0: number;
  y0: number;
  x1: number;
  y1: number;
}

/** What the analyst gives the tools beyond frame and calibration. */
export interface ToolInput {
  /** ATI scale: chosen ring radii (px), the order of the smallest, ħω (eV). */
  ati?: { guessesPx: number[]; firstOrder: number; photonEnergyEv: number };
  /** Background scale: rectangles outside the lobes. */
  regions?: PixelRect[];
  /** Rotation: the reference scan's frame and the lab azimuth of its polarization axis. */
  reference?: { scanId: number; frame: BenchFrame; labAxisDeg: number };
}

/** Bin width of the ring fit and of the radial density the ring suggestions come from, px. */
export const ATI_BIN_PX = 0.5;

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
      /** Normalised symmetry difference (I − I∘T)/σ per pixel about the found centre, NaN where not compared. */
      residualImage: Float32Array;
      nX: number;
      nY: number;
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
      /** Ring radius minus the fitted circle, px, at each ring point's azimuth. */
      residualAzimuthDeg: number[];
      residualPx: number[];
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
    }
  | { tool: 'ring-suggest'; rPx: number[]; density: number[]; suggestions: RingSuggestion[]; warnings: string[] }
  | {
      tool: 'ati-scale';
      kappa: number;
      kappaErr: number;
      e0: number;
      e0Err: number;
      alpha: number;
      alphaErr: number;
      photonEnergyEv: number;
      /** Per ring: order, fitted radius ± error, r² − line (px²). */
      rings: { order: number; guessPx: number; radiusPx: number; radiusErrPx: number; residualPx2: number }[];
      slopePx2: number;
      interceptPx2: number;
      chi2: number;
      dof: number;
      rmsPx2: number;
      warnings: string[];
    }
  | {
      tool: 'background-scale';
      scale: number;
      err: number;
      shotRatio: number | null;
      pull: number | null;
      pixels: number;
      signalCounts: number;
      backgroundCounts: number;
      chi2PerPixel: number;
      residualRms: number;
      warnings: string[];
    }
  | {
      tool: 'rotation';
      referenceScanId: number;
      rotationDeg: number;
      err: number;
      detectorAxisDeg: number;
      labAxisDeg: number;
      modulation: number;
      angleDeg: number[];
      counts: number[];
      model: number[];
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
  // Counting variance of each corrected pixel: raw counts + k² × background counts, times the gain correction squared.
  const variance = new Float64Array(nX * nY);
  for (let p = 0; p < counts.length; p++) {
    if (mask[p] === 0) continue;
    const raw = frame.counts[p]!;
    let v = raw;
    let s2 = Math.abs(raw);
    if (k !== 0 && frame.background) {
      v -= k * frame.background[p]!;
      s2 += k * k * Math.abs(frame.background[p]!);
    }
    if (invGain) {
      v *= invGain[p]!;
      s2 *= invGain[p]! * invGain[p]!;
    }
    counts[p] = v;
    variance[p] = s2;
  }
  return { nX, nY, counts, mask, variance };
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
  input: ToolInput = {},
): ToolAnswer {
  const kind = frame.meta.experimentKind;
  if (tool === 'ring-suggest' || tool === 'ati-scale') return atiTool(frame, cal, tool, input);
  if (tool === 'background-scale') return backgroundTool(frame, cal, input);
  if (tool === 'rotation') return rotationTool(cal, input);
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
      residualImage: Float32Array.from(r.residual.image),
      nX: f.nX,
      nY: f.nY,
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
        residualAzimuthDeg: r.residual.azimuthDeg,
        residualPx: r.residual.residualPx,
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

function atiTool(frame: BenchFrame, cal: DetectorCalibration, tool: 'ring-suggest' | 'ati-scale', input: ToolInput) {
  const f = correctedFrame(frame, cal);
  if (tool === 'ring-suggest') {
    const d = radialDensity(f, cal.center_px, cal, ATI_BIN_PX);
    // the radius reached in every direction (the largest circle inside the frame): beyond it the density thins out
    const [cx, cy] = cal.center_px;
    const inside = Math.min(cx, cy, f.nX - 1 - cx, f.nY - 1 - cy);
    const keep = Math.max(1, Math.floor(Math.max(inside, 10) / ATI_BIN_PX));
    const suggestions = suggestRingPeaks(d, { rMinPx: 4, rMaxPx: Math.max(inside, 10) });
    return {
      tool,
      rPx: Array.from(d.rPx.subarray(0, keep)),
      density: Array.from(d.density.subarray(0, keep), (v) => (Number.isFinite(v) ? v : 0)),
      suggestions,
      warnings: suggestions.length ? [] : ['No ring stands out of the counting noise here; add rings by hand.'],
    } satisfies ToolAnswer;
  }
  const a = input.ati;
  if (!a || a.guessesPx.length < 2) throw new RangeError('Choose at least two rings (three or more give errors).');
  if (!(a.photonEnergyEv > 0)) throw new RangeError('The photon energy must be positive.');
  const guesses = [...a.guessesPx].sort((x, y) => x - y);
  const radii = atiRingRadii(f, {
    centrePx: cal.center_px,
    calibration: cal,
    guessesPx: guesses,
    halfWidthPx: ringWindowPx(guesses, ATI_BIN_PX),
    binPx: ATI_BIN_PX,
  });
  const bad = radii.map((r, i) => (Number.isFinite(r.radiusPx) ? -1 : i)).filter((i) => i >= 0);
  if (bad.length) {
    throw new RangeError(
      `No ring could be fitted near ${bad.map((i) => `${guesses[i]!.toFixed(1)} px`).join(', ')}: untick ${bad.length === 1 ? 'it' : 'them'} or move the centre.`,
    );
  }
  const fit = fitAtiScale(
    radii.map((r) => r.radiusPx),
    radii.map((r) => r.radiusErrPx),
    a.photonEnergyEv,
    { firstOrder: a.firstOrder },
  );
  const warnings = [...fit.warnings];
  if (radii.some((r) => !r.converged)) warnings.push('The Gaussian fit of at least one ring did not converge.');
  return {
    tool: 'ati-scale',
    kappa: fit.value.kappaEvPerPx2,
    kappaErr: fit.stdErr.kappaEvPerPx2,
    e0: fit.value.e0Ev,
    e0Err: fit.stdErr.e0Ev,
    alpha: fit.value.momentumPerPixelAu,
    alphaErr: fit.stdErr.momentumPerPixelAu,
    photonEnergyEv: a.photonEnergyEv,
    rings: radii.map((r, i) => ({
      order: fit.residual.orders[i]!,
      guessPx: guesses[i]!,
      radiusPx: r.radiusPx,
      radiusErrPx: r.radiusErrPx,
      residualPx2: fit.residual.residualPx2[i]!,
    })),
    slopePx2: fit.diagnostics.slopePx2,
    interceptPx2: fit.diagnostics.interceptPx2,
    chi2: fit.diagnostics.chi2,
    dof: fit.diagnostics.dof,
    rmsPx2: fit.residual.rms,
    warnings,
  } satisfies ToolAnswer;
}

/** 1 inside any of the rectangles (clipped to the frame), 0 elsewhere. */
export function regionMask(nX: number, nY: number, rects: PixelRect[]): Uint8Array {
  const m = new Uint8Array(nX * nY);
  for (const r of rects) {
    const x0 = Math.max(0, Math.min(r.x0, r.x1));
    const x1 = Math.min(nX - 1, Math.max(r.x0, r.x1));
    const y0 = Math.max(0, Math.min(r.y0, r.y1));
    const y1 = Math.min(nY - 1, Math.max(r.y0, r.y1));
    for (let y = y0; y <= y1; y++) for (let x = x0; x <= x1; x++) m[y * nX + x] = 1;
  }
  return m;
}

function backgroundTool(frame: BenchFrame, cal: DetectorCalibration, input: ToolInput) {
  if (!frame.background) throw new RangeError('This file has no background frame to scale.');
  const rects = input.regions ?? [];
  if (!rects.length) throw new RangeError('Mark at least one region outside the lobes on the raw frame.');
  const { nX, nY } = frame.meta.shape;
  // raw Poisson counts, bad and low-gain pixels excluded (the fit's statistics need the counts themselves)
  const { mask } = buildPixelMask(cal, nX, nY);
  const bg = frame.meta.background;
  const shots = frame.meta.shots[frame.step];
  const bgShots = bg ? bg.shots[bg.layout === 'per_step' ? frame.step : 0] : undefined;
  const shotRatio = shots && bgShots && shots > 0 && bgShots > 0 ? shots / bgShots : null;
  const r = fitBackgroundScale(
    { nX, nY, counts: frame.counts, mask },
    { nX, nY, counts: frame.background, mask },
    regionMask(nX, nY, rects),
    shotRatio === null ? {} : { shotRatio },
  );
  return {
    tool: 'background-scale',
    scale: r.value.scale,
    err: r.stdErr.scale,
    shotRatio,
    pull: r.diagnostics.pullFromShotRatio,
    pixels: r.diagnostics.pixels,
    signalCounts: r.diagnostics.signalCounts,
    backgroundCounts: r.diagnostics.backgroundCounts,
    chi2PerPixel: r.diagnostics.chi2PerPixel,
    residualRms: r.residual.rms,
    warnings: r.warnings,
  } satisfies ToolAnswer;
}

function rotationTool(cal: DetectorCalibration, input: ToolInput) {
  const ref = input.reference;
  if (!ref) throw new RangeError('Choose a reference scan taken with linear polarization.');
  const shape = ref.frame.meta.shape;
  const [cx, cy] = cal.center_px;
  if (!(cx >= 0 && cy >= 0 && cx <= shape.nX - 1 && cy <= shape.nY - 1)) {
    throw new RangeError(
      `The current centre (${cx.toFixed(1)}, ${cy.toFixed(1)}) px lies outside the reference frame (${shape.nX} × ${shape.nY} px).`,
    );
  }
  // the reference's own background by its own shot ratio (a factor fitted for this scan does not apply to it)
  const f = correctedFrame(ref.frame, { ...cal, background: { ...cal.background, factor: undefined } });
  const r = fitRotationFromReference(f, cal.center_px, { calibration: cal, labAxisDeg: ref.labAxisDeg });
  return {
    tool: 'rotation',
    referenceScanId: ref.scanId,
    rotationDeg: r.value.rotationDeg,
    err: r.stdErr.rotationDeg,
    detectorAxisDeg: r.value.detectorAxisDeg,
    labAxisDeg: r.diagnostics.labAxisDeg,
    modulation: r.diagnostics.modulation,
    angleDeg: r.residual.angleDeg,
    counts: r.residual.counts,
    model: r.residual.model,
    residualRms: r.residual.rms,
    warnings: r.warnings,
  } satisfies ToolAnswer;
}
