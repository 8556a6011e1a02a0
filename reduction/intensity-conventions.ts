/**
 * Converting a stated intensity between the conventions of SCIENCE.md C5 / §1.2, for comparing campaigns whose files
 * state their intensity differently. Pure; no I/O.
 *
 * With I the cycle-averaged total intensity (`cycle_averaged_total`, the default), W cm⁻²:
 * - elliptical light (major-axis amplitude F_a, minor εF_a; angular streaking): I = I_au,lin F_a² (1 + ε²), so the
 *   linear-equivalent intensity ½ε₀cF_a² = I_au,lin F_a² is I/(1 + ε²); `per_colour` is the total itself (one colour);
 * - counter-rotating bicircular ω + 2ω (F₂ = rF₁, both circular): I = I_au,circ F₁² (1 + r²); `per_colour` (the ω
 *   colour alone) is I/(1 + r²); `linear_equivalent` (I_au,lin F₁², as reduction/fields.ts reads it) is I/(2(1 + r²)).
 * - other kinds (ω–2ω linear phase scans, single images): no field model, so only "same convention" is possible.
 *
 * Each convention is a factor g of the total (I_conv = g·I), and a conversion multiplies by g_to/g_from; statistical
 * errors scale by the same factor.
 */
import type { ExperimentKind } from './formats';

// TYPES //

export const CONVENTION_NAMES = ['cycle_averaged_total', 'linear_equivalent', 'per_colour'] as const;
export type IntensityConventionName = (typeof CONVENTION_NAMES)[number];

export interface ConventionContext {
  kind: ExperimentKind | string | null;
  /** ε ∈ [0, 1] (elliptical kinds). */
  ellipticity: number | null;
  /** F(2ω)/F(ω) (bicircular). */
  fieldRatio: number | null;
}

export type ConversionOutcome = { ok: true; factor: number } | { ok: false; reason: string };

/** Words for a convention, as written on an axis. */
export const CONVENTION_WORDS: Record<IntensityConventionName, string> = {
  cycle_averaged_total: 'cycle-averaged, total of all components',
  linear_equivalent: 'linear-equivalent, ½ε₀cF²',
  per_colour: 'per colour (ω field alone)',
};

// FUNCTIONS //

export function isConventionName(v: unknown): v is IntensityConventionName {
  return typeof v === 'string' && (CONVENTION_NAMES as readonly string[]).includes(v);
}

/** g with I_conv = g · I_total, or the reason it is not defined for this scan. */
function shareOfTotal(conv: IntensityConventionName, ctx: ConventionContext): ConversionOutcome {
  if (conv === 'cycle_averaged_total') return { ok: true, factor: 1 };
  if (ctx.kind === 'angular_streaking') {
    if (conv === 'per_colour') return { ok: true, factor: 1 };
    const e = ctx.ellipticity;
    if (e === null || !Number.isFinite(e) || e < 0 || e > 1) {
      return { ok: false, reason: 'its ellipticity is not known, and the linear-equivalent intensity depends on it' };
    }
    return { ok: true, factor: 1 / (1 + e * e) };
  }
  if (ctx.kind === 'bicircular') {
    const r = ctx.fieldRatio;
    if (r === null || !Number.isFinite(r) || r < 0) {
      return { ok: false, reason: 'its ω/2ω field ratio is not known, and the share of each colour depends on it' };
    }
    return { ok: true, factor: conv === 'per_colour' ? 1 / (1 + r * r) : 1 / (2 * (1 + r * r)) };
  }
  return { ok: false, reason: `Lobeline has no field model for ${ctx.kind ?? 'this kind of'} scans to convert with` };
}

/**
 * The factor that turns an intensity stated in `from` into `to` for a scan described by `ctx`.
 *
 * @returns `{ ok: true, factor }` (1 when the conventions agree) or `{ ok: false, reason }` (a clause for a sentence)
 * @example
 * conventionFactor('cycle_averaged_total', 'linear_equivalent', { kind: 'angular_streaking', ellipticity: 1,
 *   fieldRatio: null }); // returns { ok: true, factor: 0.5 }
 */
export function conventionFactor(
  from: IntensityConventionName,
  to: IntensityConventionName,
  ctx: ConventionContext,
): ConversionOutcome {
  if (from === to) return { ok: true, factor: 1 };
  const gFrom = shareOfTotal(from, ctx);
  if (!gFrom.ok) return gFrom;
  const gTo = shareOfTotal(to, ctx);
  if (!gTo.ok) return gTo;
  return { ok: true, factor: gTo.factor / gFrom.factor };
}
