/**
 * Problems found in a scan file: each names the HDF5 path and the rule it breaks, in words an operator understands,
 * e.g. `/entry/instrument/source/wavelength: required for every scan (fundamental wavelength in nm) but missing`.
 */

// TYPES //

export interface ScanProblem {
  /** Absolute HDF5 path (`(file)` for the file as a whole). */
  path: string;
  /** The rule, as a sentence fragment. */
  rule: string;
  /** Frame index when the problem concerns one step's data. */
  step?: number;
  /** `path: rule`, ready to print. */
  message: string;
}

// FUNCTIONS //

/**
 * Builds a problem.
 *
 * @param path - HDF5 path or `(file)`
 * @param rule - what is wrong
 * @param step - optional step index
 */
export function problem(path: string, rule: string, step?: number): ScanProblem {
  return step === undefined
    ? { path, rule, message: `${path}: ${rule}` }
    : { path, rule, step, message: `${path}: ${rule}` };
}

/** Error thrown by frame reads of an opened scan; carries the problem. */
export class ScanReadError extends Error {
  readonly problem: ScanProblem;
  constructor(p: ScanProblem) {
    super(p.message);
    this.name = 'ScanReadError';
    this.problem = p;
  }
}

/** Error for a scan file that was refused; carries every problem. */
export class ScanFileRefusedError extends Error {
  readonly problems: ScanProblem[];
  constructor(problems: ScanProblem[]) {
    super(problems.map((p) => p.message).join('\n'));
    this.name = 'ScanFileRefusedError';
    this.problems = problems;
  }
}
