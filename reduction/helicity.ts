/**
 * Helicity-difference residual (SCIENCE.md §4.4, §9.2): scans of h = +1 and h = −1 taken under matching conditions
 * should give the same offset after the sign rule of §4.6, because `offset_deg` = s·wrap(φ − φ_SM) already flips
 * with the helicity. A rotation β of the detector frame that the calibration does not undo moves every lab angle by
 * β, so it enters the two offsets with opposite signs: off₊ = θ + s₊β, off₋ = θ + s₋β with s₋ = −s₊. Hence
 *
 *   θ_off = ½(off₊ + off₋)          (the helicity-difference estimate of §4.4, β cancelled)
 *   r     = ½(off₊ − off₋)          (the residual, = s₊β for a pure frame rotation)
 *
 * |r| is reported as a systematic of the offset, beside — never folded into — the statistical error. Its own
 * statistical σ, ½√(σ₊² + σ₋²), tells whether the residual is larger than the noise.
 *
 * The grouping is a campaign-level computation over current results (lib/db/queries/helicity.ts); it is not part
 * of one scan's result JSON, since it depends on which other scans the campaign holds.
 */

// TYPES //

/** The conditions that must match between the two helicities. */
export interface HelicityConditions {
  experimentKind: string | null;
  target: string | null;
  wavelengthNm: number | null;
  /** |ε| (elliptical light); null for bicircular. */
  ellipticity: number | null;
  stepQuantity: string | null;
}

/** One step of one scan's current result. */
export interface HelicityStepInput {
  scanId: number;
  stepIndex: number;
  helicity: number | null;
  conditions: HelicityConditions;
  /** Value of the scanned quantity at this step. */
  value: number | null;
  offsetDeg: number | null;
  offsetErrDeg: number | null;
}

/** The residual of one group of matching steps that holds both helicities. */
export interface HelicityResidual {
  conditions: HelicityConditions;
  /** Step value (mean over the group). */
  value: number | null;
  plus: { scanSteps: { scanId: number; stepIndex: number }[]; offsetDeg: number; offsetErrDeg: number | null };
  minus: { scanSteps: { scanId: number; stepIndex: number }[]; offsetDeg: number; offsetErrDeg: number | null };
  /** ½(off₊ + off₋): the offset with frame rotations cancelled. */
  meanOffsetDeg: number;
  /** ½(off₊ − off₋). */
  residualDeg: number;
  /** ½√(σ₊² + σ₋²), the statistical σ of both the mean and the residual; null without errors. */
  statErrDeg: number | null;
  /** |residualDeg|: the systematic (helicity) of the offsets of this group. */
  systematicDeg: number;
}

// VARIABLES //

/** Matching tolerances (a decision of ours, see reduction/README.md). */
export const HELICITY_MATCH = {
  /** relative, wavelength */
  wavelength: 0.005,
  /** absolute, |ε| */
  ellipticity: 0.02,
  /** relative, step value (absolute below 1e-12 · scale) */
  value: 0.01,
};

// FUNCTIONS //

function near(a: number | null, b: number | null, rel: number): boolean {
  if (a === null || b === null) return a === b;
  const scale = Math.max(Math.abs(a), Math.abs(b));
  return Math.abs(a - b) <= rel * scale || scale === 0;
}

function sameConditions(a: HelicityConditions, b: HelicityConditions): boolean {
  return (
    a.experimentKind === b.experimentKind &&
    (a.target ?? '').toLowerCase() === (b.target ?? '').toLowerCase() &&
    a.stepQuantity === b.stepQuantity &&
    near(a.wavelengthNm, b.wavelengthNm, HELICITY_MATCH.wavelength) &&
    (a.ellipticity === null || b.ellipticity === null
      ? a.ellipticity === b.ellipticity
      : Math.abs(Math.abs(a.ellipticity) - Math.abs(b.ellipticity)) <= HELICITY_MATCH.ellipticity)
  );
}

/** Inverse-variance weighted mean when every error is positive, else the plain mean (error null). */
function combine(xs: { offsetDeg: number; offsetErrDeg: number | null }[]): {
  offsetDeg: number;
  offsetErrDeg: number | null;
} {
  const allErr = xs.every((x) => x.offsetErrDeg !== null && Number.isFinite(x.offsetErrDeg) && x.offsetErrDeg > 0);
  if (allErr) {
    let sw = 0;
    let swx = 0;
    for (const x of xs) {
      const w = 1 / (x.offsetErrDeg as number) ** 2;
      sw += w;
      swx += w * x.offsetDeg;
    }
    return { offsetDeg: swx / sw, offsetErrDeg: 1 / Math.sqrt(sw) };
  }
  return { offsetDeg: xs.reduce((a, x) => a + x.offsetDeg, 0) / xs.length, offsetErrDeg: null };
}

/**
 * Groups the steps by matching conditions and step value, and returns the helicity-difference residual of every
 * group that holds offsets of both helicities. Steps without a helicity of ±1 or without an offset are left out.
 * Groups are formed greedily in the order given (each step joins the first group whose first step it matches).
 */
export function helicityResiduals(steps: HelicityStepInput[]): HelicityResidual[] {
  const groups: HelicityStepInput[][] = [];
  for (const s of steps) {
    if ((s.helicity !== 1 && s.helicity !== -1) || s.offsetDeg === null || !Number.isFinite(s.offsetDeg)) continue;
    const g = groups.find(
      (gr) => sameConditions(gr[0]!.conditions, s.conditions) && near(gr[0]!.value, s.value, HELICITY_MATCH.value),
    );
    if (g) g.push(s);
    else groups.push([s]);
  }
  const out: HelicityResidual[] = [];
  for (const g of groups) {
    const p = g.filter((s) => s.helicity === 1);
    const m = g.filter((s) => s.helicity === -1);
    if (!p.length || !m.length) continue;
    const cp = combine(p as { offsetDeg: number; offsetErrDeg: number | null }[]);
    const cm = combine(m as { offsetDeg: number; offsetErrDeg: number | null }[]);
    const residual = 0.5 * (cp.offsetDeg - cm.offsetDeg);
    const values = g.map((s) => s.value).filter((v): v is number => v !== null);
    out.push({
      conditions: g[0]!.conditions,
      value: values.length ? values.reduce((a, b) => a + b, 0) / values.length : null,
      plus: { scanSteps: p.map(({ scanId, stepIndex }) => ({ scanId, stepIndex })), ...cp },
      minus: { scanSteps: m.map(({ scanId, stepIndex }) => ({ scanId, stepIndex })), ...cm },
      meanOffsetDeg: 0.5 * (cp.offsetDeg + cm.offsetDeg),
      residualDeg: residual,
      statErrDeg:
        cp.offsetErrDeg !== null && cm.offsetErrDeg !== null
          ? 0.5 * Math.hypot(cp.offsetErrDeg, cm.offsetErrDeg)
          : null,
      systematicDeg: Math.abs(residual),
    });
  }
  return out;
}

/** The residual group a scan's step belongs to, or null. */
export function helicityResidualFor(
  residuals: HelicityResidual[],
  scanId: number,
  stepIndex: number,
): HelicityResidual | null {
  return (
    residuals.find((r) =>
      [...r.plus.scanSteps, ...r.minus.scanSteps].some((s) => s.scanId === scanId && s.stepIndex === stepIndex),
    ) ?? null
  );
}
