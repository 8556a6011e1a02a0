// The rolling plan of the fixity checks (issue 14), pure: how many files one run re-hashes.

const DAY_MS = 86_400_000;

/**
 * Files one run checks so that `total` files all come round within `periodDays` with a run every `everyMs`:
 * ⌈total / runs per period⌉, where runs per period = ⌊period / every⌋ (at least 1). With the schedule off
 * (`everyMs` 0) a run checks everything.
 */
export function fixityBatchSize(total: number, everyMs: number, periodDays: number): number {
  if (total <= 0) return 0;
  if (everyMs <= 0) return total;
  const runsPerPeriod = Math.max(1, Math.floor((periodDays * DAY_MS) / everyMs));
  return Math.min(total, Math.ceil(total / runsPerPeriod));
}
