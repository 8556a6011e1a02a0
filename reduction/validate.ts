/**
 * Validation helpers of the public layer: each throws a TypeError (wrong type) or RangeError (bad value) whose
 * message names the argument and shows the bad value. Kernels below the public layer never validate.
 */

// FUNCTIONS //

/** Requires a finite number. */
export function requireFiniteNumber(name: string, value: unknown): number {
  if (typeof value !== 'number') throw new TypeError(`${name} must be a number, got ${typeof value}`);
  if (!Number.isFinite(value)) throw new RangeError(`${name} must be finite, got ${value}`);
  return value;
}

/** Requires a finite number > 0. */
export function requirePositive(name: string, value: unknown): number {
  const v = requireFiniteNumber(name, value);
  if (v <= 0) throw new RangeError(`${name} must be > 0, got ${v}`);
  return v;
}

/** Requires an integer in [min, max]. */
export function requireInteger(name: string, value: unknown, min: number, max = Number.MAX_SAFE_INTEGER): number {
  if (typeof value !== 'number') throw new TypeError(`${name} must be an integer, got ${typeof value}`);
  if (!Number.isInteger(value) || value < min || value > max) {
    throw new RangeError(`${name} must be an integer in [${min}, ${max}], got ${value}`);
  }
  return value;
}

type NumericArray = Float64Array | Float32Array | Int32Array | Uint32Array | Uint16Array | Int16Array | Uint8Array;

/** Requires a typed array (or plain number array) of exactly `length` elements. */
export function requireLength(name: string, value: unknown, length: number): ArrayLike<number> {
  if (!(ArrayBuffer.isView(value) || Array.isArray(value))) {
    throw new TypeError(`${name} must be a typed array or an array of numbers, got ${typeof value}`);
  }
  const arr = value as NumericArray | number[];
  if (arr.length !== length) {
    throw new RangeError(`${name} must have ${length} elements, got ${arr.length}`);
  }
  return arr;
}

/** Throws a RangeError naming the first non-finite element, if any. */
export function requireAllFinite(name: string, value: ArrayLike<number>): void {
  for (let i = 0; i < value.length; i++) {
    const v = value[i]!;
    if (!Number.isFinite(v)) throw new RangeError(`${name}[${i}] must be finite, got ${v}`);
  }
}
