// Why a reduction failed, in words a physicist understands, and whether trying again could help.
// Problems of the file or of the chosen versions are permanent (no retry); problems of the services (S3, MariaDB,
// Redis) are transient and retried with back-off.

import { isAppError } from '@/lib/errors';
import { ScanFileRefusedError, ScanReadError } from '@/reduction/hdf5/problems';

/** A failure that another attempt cannot fix; the message is shown to users as it is. */
export class ReductionRefusedError extends Error {
  readonly details: string[];
  constructor(message: string, details: string[] = []) {
    super(message);
    this.name = 'ReductionRefusedError';
    this.details = details;
  }
}

export interface FailureExplanation {
  /** One or more sentences for reduction_jobs.error_message, scans.status_message and the e-mail. */
  message: string;
  /** Whether another attempt may succeed. */
  transient: boolean;
}

const MAX_LISTED = 8;

/**
 * Explains an error thrown while reducing a scan.
 *
 * @param err - anything thrown
 * @returns the explanation and whether a retry makes sense
 */
export function explainFailure(err: unknown): FailureExplanation {
  if (err instanceof ReductionRefusedError) {
    const list = err.details.slice(0, MAX_LISTED).map((d) => `- ${d}`);
    return { message: [err.message, ...list].join('\n'), transient: false };
  }
  if (err instanceof ScanFileRefusedError) {
    const lines = err.problems.slice(0, MAX_LISTED).map((p) => `- ${p.message}`);
    const more = err.problems.length > MAX_LISTED ? [`- … and ${err.problems.length - MAX_LISTED} more`] : [];
    return {
      message: ['The scan file could not be used:', ...lines, ...more].join('\n'),
      transient: false,
    };
  }
  if (err instanceof ScanReadError) {
    const where = err.problem.step === undefined ? '' : ` (step ${err.problem.step})`;
    return { message: `Reading the scan file failed${where}: ${err.problem.message}`, transient: false };
  }
  if (isAppError(err)) {
    if (err.code === 'not_found:storage') {
      return {
        message: 'The raw file is missing from the file store (it may have been archived or deleted).',
        transient: false,
      };
    }
    if (err.surface === 'storage' || err.surface === 'database' || err.surface === 'queue') {
      const what = { storage: 'file store (S3)', database: 'database', queue: 'job queue (Redis)' }[err.surface];
      return { message: `The ${what} did not answer.`, transient: true };
    }
    return { message: err.userMessage, transient: false };
  }
  if (err instanceof RangeError || err instanceof TypeError) {
    // The numerical library throws these with a sentence naming the bad value (e.g. a window outside the grid).
    return { message: `The reduction refused its input: ${err.message}`, transient: false };
  }
  const name = (err as { name?: string })?.name ?? '';
  if (/SequelizeConnection|Timeout|HostNotReachable/i.test(name) || /ECONN|ETIMEDOUT|EPIPE/.test(String(err))) {
    return {
      message: 'A service Lobeline depends on (database or file store) did not answer.',
      transient: true,
    };
  }
  if (name.startsWith('Sequelize')) {
    return {
      message: 'The database refused to store or read part of the job (the details are in the worker log).',
      transient: true,
    };
  }
  const text = err instanceof Error ? err.message : String(err);
  return { message: `The reduction stopped with an unexpected error: ${text}`, transient: true };
}

export interface AttemptOutcome {
  /** No further attempt will be made (permanent problem, or the last attempt). */
  final: boolean;
  /** For reduction_jobs.error_message. */
  jobMessage: string;
  /** For scans.status_message while the job waits for its next attempt (null when final). */
  scanMessage: string | null;
}

/**
 * What to tell users after a failed attempt. Only a transient failure with attempts left mentions another attempt
 * (with its approximate wait); a final one says how many attempts were made and that nothing more will happen
 * by itself, so no message promises a retry that will not come.
 *
 * @param attemptNo - this attempt, 1-based
 * @param maxAttempts - attempts allowed in total
 * @param retryInMs - wait before the next attempt (used only when one is left)
 */
export function describeAttempt(
  ex: FailureExplanation,
  attemptNo: number,
  maxAttempts: number,
  retryInMs: number,
): AttemptOutcome {
  const final = !ex.transient || attemptNo >= maxAttempts;
  if (final) {
    const tail = ex.transient
      ? `\nGave up after ${attemptNo} attempt${attemptNo === 1 ? '' : 's'}; it will not be tried again by itself. ` +
        'Reduce the scan again once the services answer.'
      : '';
    return { final, jobMessage: `${ex.message}${tail}`, scanMessage: null };
  }
  const seconds = Math.max(1, Math.round(retryInMs / 1000));
  const next = `Attempt ${attemptNo} of ${maxAttempts} failed; the next one starts in about ${seconds} s.`;
  return { final, jobMessage: `${next} ${ex.message}`, scanMessage: `${next} ${ex.message}` };
}
