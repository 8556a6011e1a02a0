// Retry policy of reduction jobs (lib/queue/reduction-queue.ts, lib/jobs/failure.ts). The requirement checked here
// is the project's own (issue "outages"): transient failures must ride out a one-minute outage of S3, MariaDB or
// Redis, and no message may promise an attempt that will not come.
import { describe, expect, it } from 'vitest';
import { AppError } from '@/lib/errors';
import { describeAttempt, explainFailure, ReductionRefusedError } from '@/lib/jobs/failure';
import { REDUCTION_ATTEMPTS, reductionBackoffMs } from '@/lib/queue/reduction-queue';

describe('back-off between attempts', () => {
  it('doubles from 5 s and is capped at 60 s', () => {
    expect([1, 2, 3, 4, 5, 6, 9].map(reductionBackoffMs)).toEqual([
      5_000, 10_000, 20_000, 40_000, 60_000, 60_000, 60_000,
    ]);
  });

  it('the waits before the last attempt add up to more than a one-minute outage', () => {
    let total = 0;
    for (let made = 1; made < REDUCTION_ATTEMPTS; made++) total += reductionBackoffMs(made);
    expect(total).toBeGreaterThan(60_000);
    expect(total).toBe(135_000);
  });
});

describe('messages after a failed attempt', () => {
  const storage = explainFailure(new AppError('unavailable:storage'));
  const refused = explainFailure(new ReductionRefusedError('The calibration centre lies outside the detector.'));

  it('a transient failure is transient and its explanation promises nothing', () => {
    expect(storage.transient).toBe(true);
    expect(storage.message).toBe('The file store (S3) did not answer.');
  });

  it('with attempts left, names the next attempt and its wait', () => {
    const out = describeAttempt(storage, 1, REDUCTION_ATTEMPTS, reductionBackoffMs(1));
    expect(out.final).toBe(false);
    expect(out.jobMessage).toMatch(/^Attempt 1 of 6 failed; the next one starts in about 5 s\./);
    expect(out.scanMessage).toBe(out.jobMessage);
  });

  it('on the last attempt, says it gave up and will not try again by itself', () => {
    const out = describeAttempt(storage, REDUCTION_ATTEMPTS, REDUCTION_ATTEMPTS, reductionBackoffMs(6));
    expect(out.final).toBe(true);
    expect(out.jobMessage).toMatch(/Gave up after 6 attempts; it will not be tried again by itself\./);
    expect(out.jobMessage).not.toMatch(/next one starts|will be tried again/);
  });

  it('a permanent problem is final on the first attempt and mentions no retry', () => {
    const out = describeAttempt(refused, 1, REDUCTION_ATTEMPTS, reductionBackoffMs(1));
    expect(out.final).toBe(true);
    expect(out.jobMessage).toBe('The calibration centre lies outside the detector.');
  });
});
