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
      return {
        message: `${err.userMessage} The reduction will be tried again automatically.`,
        transient: true,
      };
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
      message:
        'A service Lobeline depends on (database or file store) did not answer. The reduction will be tried again.',
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
