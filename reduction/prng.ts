/**
 * Deterministic pseudo-random numbers: xoshiro128** (D. Blackman, S. Vigna, "Scrambled linear pseudorandom number
 * generators", ACM TOMS 47, 36 (2021)) seeded through splitmix32, with uniform, normal and Poisson samplers.
 *
 * The Poisson sampler is exact for every mean: sequential inversion for μ < 10 and the transformed-rejection method
 * PTRS of W. Hörmann, "The transformed rejection method for generating Poisson random variables", Insurance:
 * Mathematics and Economics 12, 39 (1993) for μ ≥ 10. μ = 0 returns 0; negative or non-finite μ throws.
 *
 * Same seed ⇒ same sequence on every platform (only 32-bit integer arithmetic and IEEE doubles are used).
 */

// VARIABLES //

const TWO_POW_M32 = 2 ** -32;
const TWO_POW_M53 = 2 ** -53;
const LOG_FACTORIAL_TABLE_SIZE = 256;
const LOG_FACTORIAL = new Float64Array(LOG_FACTORIAL_TABLE_SIZE);
for (let k = 2; k < LOG_FACTORIAL_TABLE_SIZE; k++) LOG_FACTORIAL[k] = LOG_FACTORIAL[k - 1]! + Math.log(k);

// TYPES //

/** A seeded generator. All methods advance the same state. */
export interface Prng {
  /** Next raw 32-bit unsigned integer. */
  nextUint32(): number;
  /** Uniform double in [0, 1) with 53 random bits. */
  uniform(): number;
  /** Uniform double in (0, 1) with 32 random bits (one state step; the fast path of the samplers). */
  uniform32(): number;
  /** Standard normal deviate (Box–Muller, one value per call). */
  normal(): number;
  /** Poisson deviate with mean μ ≥ 0 (exact for all μ). */
  poisson(mean: number): number;
  /** Copy of the internal state (four uint32). */
  state(): Uint32Array;
}

// FUNCTIONS //

/**
 * ln(k!) for an integer k ≥ 0: a table below 256, Stirling's series (error < 1e-15 relative) above.
 *
 * @param k - non-negative integer
 * @returns ln k!
 */
export function logFactorial(k: number): number {
  if (k < LOG_FACTORIAL_TABLE_SIZE) return LOG_FACTORIAL[k]!;
  const x = k + 1;
  const ix = 1 / x;
  const ix2 = ix * ix;
  // ln Γ(x) = (x − ½)ln x − x + ½ ln 2π + 1/(12x) − 1/(360x³) + 1/(1260x⁵)
  return (x - 0.5) * Math.log(x) - x + 0.918_938_533_204_672_8 + ix * (1 / 12 - ix2 * (1 / 360 - ix2 / 1260));
}

/**
 * xoshiro128** generator (state in four fields so that kernels can load it into locals).
 */
export class Xoshiro128 implements Prng {
  s0: number;
  s1: number;
  s2: number;
  s3: number;

  constructor(seed: number) {
    let z = seed >>> 0;
    const s = new Uint32Array(4);
    for (let i = 0; i < 4; i++) {
      // splitmix32
      z = (z + 0x9e3779b9) >>> 0;
      let t = z;
      t = Math.imul(t ^ (t >>> 16), 0x85ebca6b);
      t = Math.imul(t ^ (t >>> 13), 0xc2b2ae35);
      s[i] = (t ^ (t >>> 16)) >>> 0;
    }
    if ((s[0]! | s[1]! | s[2]! | s[3]!) === 0) s[0] = 1;
    this.s0 = s[0]! | 0;
    this.s1 = s[1]! | 0;
    this.s2 = s[2]! | 0;
    this.s3 = s[3]! | 0;
  }

  nextUint32(): number {
    const s0 = this.s0;
    const s1 = this.s1;
    const m = Math.imul(s1, 5);
    const r = Math.imul((m << 7) | (m >>> 25), 9) >>> 0;
    const t = s1 << 9;
    let s2 = this.s2 ^ s0;
    let s3 = this.s3 ^ s1;
    this.s1 = s1 ^ s2;
    this.s0 = s0 ^ s3;
    s2 ^= t;
    s3 = (s3 << 11) | (s3 >>> 21);
    this.s2 = s2;
    this.s3 = s3;
    return r;
  }

  uniform(): number {
    const a = this.nextUint32() >>> 5; // 27 bits
    const b = this.nextUint32() >>> 6; // 26 bits
    return (a * 67_108_864 + b) * TWO_POW_M53;
  }

  uniform32(): number {
    return (this.nextUint32() + 0.5) * TWO_POW_M32;
  }

  normal(): number {
    const u = (this.nextUint32() + 1) * TWO_POW_M32;
    const v = this.uniform();
    return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
  }

  poisson(mean: number): number {
    if (!(mean >= 0) || mean === Number.POSITIVE_INFINITY) {
      throw new RangeError(`Poisson mean must be a finite number ≥ 0, got ${mean}`);
    }
    if (mean === 0) return 0;
    if (mean < 10) {
      // sequential inversion
      let x = 0;
      let p = Math.exp(-mean);
      let cum = p;
      const u = this.uniform();
      while (u > cum && x < 1000) {
        x++;
        p *= mean / x;
        cum += p;
      }
      return x;
    }
    // PTRS (Hörmann 1993)
    const loglam = Math.log(mean);
    const { a, b, invalpha, vr } = ptrsConstants(mean);
    for (;;) {
      const u = this.uniform() - 0.5;
      const v = (this.nextUint32() + 1) * TWO_POW_M32;
      const us = 0.5 - Math.abs(u);
      const k = Math.floor(((2 * a) / us + b) * u + mean + 0.43);
      if (us >= 0.07 && v <= vr) return k;
      if (k < 0 || (us < 0.013 && v > us)) continue;
      if (Math.log(v) + Math.log(invalpha) - Math.log(a / (us * us) + b) <= -mean + k * loglam - logFactorial(k)) {
        return k;
      }
    }
  }

  state(): Uint32Array {
    return Uint32Array.of(this.s0 >>> 0, this.s1 >>> 0, this.s2 >>> 0, this.s3 >>> 0);
  }
}

/** The constants of Hörmann's PTRS sampler for a mean μ ≥ 10 (b, a, 1/α and v_r of the paper's step 0). */
function ptrsConstants(mu: number): { a: number; b: number; invalpha: number; vr: number } {
  const b = 0.931 + 2.53 * Math.sqrt(mu);
  return { a: -0.059 + 0.024_83 * b, b, invalpha: 1.1239 + 1.1328 / (b - 3.4), vr: 0.9277 - 3.6224 / (b - 2) };
}

/**
 * Creates an xoshiro128** generator. The 32-bit seed is expanded with splitmix32 into the 128-bit state.
 *
 * @param seed - any integer (only its low 32 bits are used; negative values are fine)
 * @returns the generator
 * @throws {TypeError} when the seed is not a finite integer
 * @example
 * const g = createPrng(12345); g.poisson(3.5); // returns a non-negative integer, the same one on every run
 */
export function createPrng(seed: number): Xoshiro128 {
  if (typeof seed !== 'number' || !Number.isInteger(seed)) {
    throw new TypeError(`seed must be an integer, got ${String(seed)}`);
  }
  return new Xoshiro128(seed);
}

/**
 * Poisson means with their sampler constants precomputed, for drawing the same set of means many times (the
 * bootstrap draws every bin of a histogram once per replicate): exact inversion of the CDF starting at the mode
 * below μ = 100, PTRS above, with 32-bit uniforms.
 */
export interface PoissonTable {
  n: number;
  mean: Float64Array;
  /** |μ| < 100: pmf at the mode; else PTRS b. */
  c0: Float64Array;
  /** |μ| < 100: CDF at the mode; else PTRS a. */
  c1: Float64Array;
  /** |μ| < 100: the mode ⌊μ⌋; else PTRS ln(invalpha). */
  c2: Float64Array;
  /** PTRS v_r. */
  c3: Float64Array;
  /** PTRS ln μ. */
  c4: Float64Array;
}

/** Below this mean the table sampler inverts the CDF starting at the mode (≈ 0.8√μ steps), above it uses PTRS. */
const TABLE_INVERSION_LIMIT = 100;

/**
 * Precomputes a table (negative means are sampled as −Poisson(|μ|), the sign kept in `mean`).
 * For |μ| < 100 the pmf and CDF at the mode are computed by the recursion p_{k+1} = p_k μ/(k+1) from e^{−μ}
 * (no underflow: e^{−100} ≈ 4e−44); above, the PTRS constants.
 *
 * @param means - Poisson means
 * @returns the table
 */
export function createPoissonTable(means: ArrayLike<number>): PoissonTable {
  const n = means.length;
  const t: PoissonTable = {
    n,
    mean: Float64Array.from(means),
    c0: new Float64Array(n),
    c1: new Float64Array(n),
    c2: new Float64Array(n),
    c3: new Float64Array(n),
    c4: new Float64Array(n),
  };
  for (let i = 0; i < n; i++) {
    const mu = Math.abs(t.mean[i]!);
    if (!Number.isFinite(mu) || mu === 0) continue;
    if (mu < TABLE_INVERSION_LIMIT) {
      const mode = Math.floor(mu);
      let p = Math.exp(-mu);
      let F = p;
      for (let k = 1; k <= mode; k++) {
        p *= mu / k;
        F += p;
      }
      t.c0[i] = p;
      t.c1[i] = F;
      t.c2[i] = mode;
    } else {
      const c = ptrsConstants(mu);
      t.c0[i] = c.b;
      t.c1[i] = c.a;
      t.c2[i] = Math.log(c.invalpha);
      t.c3[i] = c.vr;
      t.c4[i] = Math.log(mu);
    }
  }
  return t;
}

/**
 * Kernel: draws every entry of a table once, out[idx[i]] = ±Poisson(|μ_i|) (sign of μ kept, 0 and NaN copied).
 * The xoshiro128** step is inlined on local copies of the state (written back at the end), which is what makes the
 * bootstrap fast; the sequence is the same as calling `rng.uniform32()` for each uniform.
 *
 * @param t - table
 * @param rng - generator
 * @param out - output array
 * @param idx - destination index of each entry (null: i)
 * @returns out
 */
export function samplePoissonTable(
  t: PoissonTable,
  rng: Xoshiro128,
  out: Float64Array,
  idx: Int32Array | null,
): Float64Array {
  const n = t.n;
  const mean = t.mean;
  const c0 = t.c0;
  const c1 = t.c1;
  const c2 = t.c2;
  let s0 = rng.s0;
  let s1 = rng.s1;
  let s2 = rng.s2;
  let s3 = rng.s3;
  let r = 0;
  let m5 = 0;
  let tt = 0;
  for (let i = 0; i < n; i++) {
    const m = mean[i]!;
    const dst = idx ? idx[i]! : i;
    if (m === 0 || Number.isNaN(m)) {
      out[dst] = m;
      continue;
    }
    const mu = m < 0 ? -m : m;
    let k: number;
    if (mu < TABLE_INVERSION_LIMIT) {
      // inversion from the mode
      m5 = Math.imul(s1, 5);
      r = Math.imul((m5 << 7) | (m5 >>> 25), 9) >>> 0;
      tt = s1 << 9;
      s2 ^= s0;
      s3 ^= s1;
      s1 ^= s2;
      s0 ^= s3;
      s2 ^= tt;
      s3 = (s3 << 11) | (s3 >>> 21);
      const u = (r + 0.5) * TWO_POW_M32;
      k = c2[i]!;
      let p = c0[i]!;
      let F = c1[i]!;
      if (u <= F) {
        // down: while u ≤ F(k − 1) = F(k) − p(k)
        while (k > 0 && u <= F - p) {
          F -= p;
          p *= k / mu;
          k--;
        }
      } else {
        const kMax = k + 60 + 20 * Math.sqrt(mu);
        while (u > F && k < kMax) {
          k++;
          p *= mu / k;
          F += p;
        }
      }
    } else {
      const b = c0[i]!;
      const a = c1[i]!;
      const lia = c2[i]!;
      const vr = t.c3[i]!;
      const loglam = t.c4[i]!;
      for (;;) {
        m5 = Math.imul(s1, 5);
        r = Math.imul((m5 << 7) | (m5 >>> 25), 9) >>> 0;
        tt = s1 << 9;
        s2 ^= s0;
        s3 ^= s1;
        s1 ^= s2;
        s0 ^= s3;
        s2 ^= tt;
        s3 = (s3 << 11) | (s3 >>> 21);
        const u = (r + 0.5) * TWO_POW_M32 - 0.5;
        m5 = Math.imul(s1, 5);
        r = Math.imul((m5 << 7) | (m5 >>> 25), 9) >>> 0;
        tt = s1 << 9;
        s2 ^= s0;
        s3 ^= s1;
        s1 ^= s2;
        s0 ^= s3;
        s2 ^= tt;
        s3 = (s3 << 11) | (s3 >>> 21);
        const v = (r + 0.5) * TWO_POW_M32;
        const us = 0.5 - (u < 0 ? -u : u);
        k = Math.floor(((2 * a) / us + b) * u + mu + 0.43);
        if (us >= 0.07 && v <= vr) break;
        if (k < 0 || (us < 0.013 && v > us)) continue;
        if (Math.log(v) + lia - Math.log(a / (us * us) + b) <= -mu + k * loglam - logFactorial(k)) break;
      }
    }
    out[dst] = m < 0 ? -k : k;
  }
  rng.s0 = s0;
  rng.s1 = s1;
  rng.s2 = s2;
  rng.s3 = s3;
  return out;
}
