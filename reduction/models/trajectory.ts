/**
 * Classical Coulomb-corrected trajectories for the attoclock offset (SCIENCE.md §10.3–§10.6): an electron born at
 * the tunnel exit at rest along the field, propagated in the laser field plus the ion's Coulomb field to the end of
 * the pulse, then carried to t → ∞ along its Kepler hyperbola.
 *
 * - Equation of motion (electron, ion of charge Z, a.u.): r̈ = −E(t) − Z r/|r|³, with E = −dA/dt of the cos²
 *   pulse of §4.1 (reduction/fields.ts), integrated with an adaptive Dormand–Prince 5(4) Runge–Kutta method
 *   [J. R. Dormand, P. J. Prince, J. Comput. Appl. Math. 6, 19 (1980)] to a tolerance of 10⁻¹¹.
 * - Kepler asymptote (§10.4): E = v²/2 − Z/|r| > 0, k = √(2E), L = r × v, a = v × L − Z r/|r|,
 *   p∞ = k [k (L × a) − Z a] / (Z² + k² L²); E ≤ 0: bound (counted apart).
 * - Offset (C7): θ_off = h · wrap(φ(p∞) − φ_SM), φ_SM the direction of −A(t₀) (§4.2), positive in the sense of the
 *   field's rotation.
 * - Keldysh–Rutherford estimate (§10.6, Bray, Eckart & Kheifets, PRL 121, 123201 (2018)): tan(Θ/2) = Zω²/(Ip F).
 */
import { radToDeg, wrapDeg } from '../angles';
import { type EllipticalFieldParams, electricFieldEllipticalAu, vectorPotentialEllipticalAu } from '../fields';
import { type BoundState, type ExitModel, tunnelExitRadius } from './tunnelling';

// TYPES //

export type Vec3 = [number, number, number];

export interface TrajectoryInput {
  field: EllipticalFieldParams & { envelopeDurationAu: number };
  state: BoundState;
  /** Birth time, a.u. */
  t0: number;
  exit: ExitModel;
  /** Initial velocity perpendicular to the field at birth (a.u.; default 0). */
  vPerp?: Vec3;
  /** Relative and absolute tolerance of the integrator (default 1e-11). */
  tolerance?: number;
}

export interface TrajectoryResult {
  /** Momentum at t → ∞, or null when the electron stays bound. */
  pFinal: Vec3 | null;
  /** Simple-man momentum −A(t₀). */
  pSimpleMan: [number, number];
  /** θ_off in degrees (null when bound). */
  offsetDeg: number | null;
  /** |p⊥| in the polarization plane at t → ∞ (null when bound). */
  pPlaneAu: number | null;
  /** Integrator steps taken. */
  steps: number;
}

// FUNCTIONS //

function cross(a: Vec3, b: Vec3): Vec3 {
  return [a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]];
}

/**
 * Asymptotic momentum of an electron at (r, v) in the field-free Coulomb potential −Z/r (SCIENCE.md §10.4).
 *
 * @returns p∞, or null when the energy is ≤ 0 (bound)
 */
export function keplerAsymptote(r: Vec3, v: Vec3, z: number): Vec3 | null {
  const rn = Math.hypot(r[0], r[1], r[2]);
  const energy = (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]) / 2 - z / rn;
  if (!(energy > 0)) return null;
  const k = Math.sqrt(2 * energy);
  const L = cross(r, v);
  const vl = cross(v, L);
  const a: Vec3 = [vl[0] - (z * r[0]) / rn, vl[1] - (z * r[1]) / rn, vl[2] - (z * r[2]) / rn];
  const la = cross(L, a);
  const l2 = L[0] * L[0] + L[1] * L[1] + L[2] * L[2];
  const d = z * z + k * k * l2;
  return [(k * (k * la[0] - z * a[0])) / d, (k * (k * la[1] - z * a[1])) / d, (k * (k * la[2] - z * a[2])) / d];
}

// Dormand–Prince 5(4) tableau
const C = [0, 1 / 5, 3 / 10, 4 / 5, 8 / 9, 1, 1];
const A: number[][] = [
  [],
  [1 / 5],
  [3 / 40, 9 / 40],
  [44 / 45, -56 / 15, 32 / 9],
  [19372 / 6561, -25360 / 2187, 64448 / 6561, -212 / 729],
  [9017 / 3168, -355 / 33, 46732 / 5247, 49 / 176, -5103 / 18656],
  [35 / 384, 0, 500 / 1113, 125 / 192, -2187 / 6784, 11 / 84],
];
/** 5th-order weights minus the embedded 4th-order ones: the local error estimate. */
const E5 = [71 / 57600, 0, -71 / 16695, 71 / 1920, -17253 / 339200, 22 / 525, -1 / 40];

/**
 * Integrates y' = f(t, y) from t0 to t1 with adaptive Dormand–Prince 5(4) steps (FSAL), error per component
 * against tol·(1 + |y|).
 *
 * @returns the state at t1 and the number of accepted steps
 */
export function integrateDopri5(
  f: (t: number, y: Float64Array, out: Float64Array) => void,
  t0: number,
  y0: ArrayLike<number>,
  t1: number,
  tol = 1e-11,
  maxSteps = 5_000_000,
): { y: Float64Array; steps: number } {
  const n = y0.length;
  const y = Float64Array.from(y0);
  const k = Array.from({ length: 7 }, () => new Float64Array(n));
  const tmp = new Float64Array(n);
  const yNew = new Float64Array(n);
  let t = t0;
  let h = Math.min(0.01, t1 - t0);
  f(t, y, k[0]!);
  let steps = 0;
  while (t < t1) {
    if (steps >= maxSteps) throw new Error(`the trajectory needed more than ${maxSteps} steps`);
    if (t + h > t1) h = t1 - t;
    for (let s = 1; s < 7; s++) {
      const row = A[s]!;
      for (let i = 0; i < n; i++) {
        let acc = y[i]!;
        for (let j = 0; j < s; j++) acc += h * row[j]! * k[j]![i]!;
        tmp[i] = acc;
      }
      f(t + C[s]! * h, tmp, k[s]!);
      if (s === 6) yNew.set(tmp); // the 7th stage is evaluated at the 5th-order solution (FSAL)
    }
    let err = 0;
    for (let i = 0; i < n; i++) {
      let e = 0;
      for (let s = 0; s < 7; s++) e += E5[s]! * k[s]![i]!;
      const sc = tol * (1 + Math.max(Math.abs(y[i]!), Math.abs(yNew[i]!)));
      err = Math.max(err, Math.abs(h * e) / sc);
    }
    if (err <= 1) {
      t += h;
      y.set(yNew);
      k[0]!.set(k[6]!);
      steps++;
    }
    const factor = err === 0 ? 5 : Math.min(5, Math.max(0.2, 0.9 * err ** -0.2));
    h *= factor;
  }
  return { y, steps };
}

/**
 * One trajectory from birth at t₀ to t → ∞ (SCIENCE.md §10.3–§10.4), with the offset against the simple-man
 * direction of its own birth time.
 */
export function runTrajectory(input: TrajectoryInput): TrajectoryResult {
  const { field, state } = input;
  const e0 = electricFieldEllipticalAu(input.t0, field, [0, 0]);
  const fMag = Math.hypot(e0[0]!, e0[1]!);
  const a0 = vectorPotentialEllipticalAu(input.t0, field, [0, 0]);
  const pSimpleMan: [number, number] = [-a0[0]!, -a0[1]!];
  const rExit = tunnelExitRadius(fMag, state, input.exit);
  if (rExit === null) throw new RangeError(`no real tunnel exit (${input.exit}) at F = ${fMag.toPrecision(4)} a.u.`);
  const ux = e0[0]! / fMag;
  const uy = e0[1]! / fMag;
  const v = input.vPerp ?? [0, 0, 0];
  const y0 = [-rExit * ux, -rExit * uy, 0, v[0], v[1], v[2]];
  const z = state.z;
  const e = [0, 0];
  const rhs = (t: number, yy: Float64Array, out: Float64Array) => {
    electricFieldEllipticalAu(t, field, e);
    const x = yy[0]!;
    const yv = yy[1]!;
    const zv = yy[2]!;
    const r2 = x * x + yv * yv + zv * zv;
    const inv3 = z / (r2 * Math.sqrt(r2));
    out[0] = yy[3]!;
    out[1] = yy[4]!;
    out[2] = yy[5]!;
    out[3] = -e[0]! - x * inv3;
    out[4] = -e[1]! - yv * inv3;
    out[5] = -zv * inv3;
  };
  const tEnd = field.envelopeDurationAu / 2;
  const { y, steps } = integrateDopri5(rhs, input.t0, y0, tEnd, input.tolerance ?? 1e-11);
  const pFinal = keplerAsymptote([y[0]!, y[1]!, y[2]!], [y[3]!, y[4]!, y[5]!], z);
  if (pFinal === null) return { pFinal, pSimpleMan, offsetDeg: null, pPlaneAu: null, steps };
  const phi = radToDeg(Math.atan2(pFinal[1], pFinal[0]));
  const phiSm = radToDeg(Math.atan2(pSimpleMan[1], pSimpleMan[0]));
  return {
    pFinal,
    pSimpleMan,
    offsetDeg: field.helicity * wrapDeg(phi - phiSm),
    pPlaneAu: Math.hypot(pFinal[0], pFinal[1]),
    steps,
  };
}

/**
 * Keldysh–Rutherford estimate of SCIENCE.md §10.6: the full deflection Θ (degrees) with tan(Θ/2) = Zω²/(Ip F).
 * Whether the offset compares with Θ or Θ/2 is left open there; both are returned.
 */
export function keldyshRutherfordDeg(
  omegaAu: number,
  fieldAu: number,
  state: BoundState,
): { full: number; half: number } {
  const half = radToDeg(Math.atan((state.z * omegaAu * omegaAu) / (state.ipAu * fieldAu)));
  return { full: 2 * half, half };
}
