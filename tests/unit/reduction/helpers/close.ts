import { expect } from 'vitest';

/** Machine epsilon of float64. */
export const EPS = Number.EPSILON;

/**
 * Exact check first, then |actual − expected| ≤ tol; the failure message prints the label, actual, expected and tol.
 */
export function expectClose(actual: number, expected: number, tol: number, label = ''): void {
  if (actual === expected) return;
  const diff = Math.abs(actual - expected);
  expect(diff <= tol, `${label}: actual ${actual}, expected ${expected}, |diff| ${diff} > tol ${tol}`).toBe(true);
}

/** Relative version: tol·max(|expected|, tiny). */
export function expectRel(actual: number, expected: number, rel: number, label = ''): void {
  expectClose(actual, expected, rel * Math.max(Math.abs(expected), 1e-300), label);
}
