// What a draft calibration would change (C7): one step of a scan, its current (approved) result before and the
// draft's reduction in the browser after. Pure arithmetic, shared by the page and the tests.
//
// The trial reduces without resampling (a bootstrap of every step of a campaign would take minutes in a browser),
// so its step offset would be the plain mean of the lobes while the stored one weights them by their bootstrap
// errors. To compare like with like, the "after" step offset weights the draft's lobe offsets with the current
// result's lobe errors (the same estimator, the same weights): a draft equal to the current calibration changes
// nothing. Each change is given in units of the current result's error (its bootstrap σ), the scale on which an
// analyst judges whether a change matters; it is not the σ of the difference, which is smaller because both
// reductions read the same counts.
import type { StepResult } from '@/reduction/formats';

export interface QuantityChange {
  before: number | null;
  after: number | null;
  /** after − before */
  delta: number | null;
  /** σ of the current result */
  sigma: number | null;
  /** delta / sigma */
  inSigma: number | null;
}

export interface StepChange {
  step: number;
  lobesBefore: number;
  lobesAfter: number;
  offsetDeg: QuantityChange;
  radiusAu: QuantityChange;
  intensityWcm2: QuantityChange;
}

function change(before: number | null, after: number | null, sigma: number | null): QuantityChange {
  const delta = before !== null && after !== null ? after - before : null;
  const s = sigma !== null && Number.isFinite(sigma) && sigma > 0 ? sigma : null;
  return { before, after, delta, sigma: s, inSigma: delta !== null && s !== null ? delta / s : null };
}

/** The draft's step offset with the current result's lobe weights (plain mean when the weights are unknown). */
export function offsetWithWeights(before: StepResult, after: StepResult): number | null {
  const a = after.lobes.map((l) => l.offset_deg);
  if (a.length === 0 || a.some((o) => o === null)) return after.offset_deg;
  const errs = before.lobes.map((l) => l.offset_err_deg);
  const weighted =
    before.lobes.length === a.length && errs.every((e) => e !== null && Number.isFinite(e) && (e as number) > 0);
  let sw = 0;
  let s = 0;
  a.forEach((o, i) => {
    const w = weighted ? 1 / (errs[i] as number) ** 2 : 1;
    sw += w;
    s += w * (o as number);
  });
  return s / sw;
}

export function stepChange(before: StepResult, after: StepResult): StepChange {
  return {
    step: before.index,
    lobesBefore: before.lobes.length,
    lobesAfter: after.lobes.length,
    offsetDeg: change(before.offset_deg, offsetWithWeights(before, after), before.offset_err_deg),
    radiusAu: change(before.radius_au, after.radius_au, before.radius_err_au),
    intensityWcm2: change(
      before.intensity_from_radius_Wcm2,
      after.intensity_from_radius_Wcm2,
      before.intensity_from_radius_err_Wcm2,
    ),
  };
}

/** The largest |change|/σ of a step (what the list sorts and colours by), null when none is known. */
export function largestPull(c: StepChange): number | null {
  const v = [c.offsetDeg.inSigma, c.radiusAu.inSigma, c.intensityWcm2.inSigma].filter((x): x is number => x !== null);
  return v.length ? Math.max(...v.map(Math.abs)) : null;
}
