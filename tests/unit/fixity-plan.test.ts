// The fixity schedule (issue 14): the batch size of the rolling plan and the environment's duration syntax.
// Worked by hand: 10 000 files, a run every hour, a 30-day period → 720 runs per period → ⌈10 000 / 720⌉ = 14 files
// per run, and 720 × 14 = 10 080 ≥ 10 000, so every file comes round within the period.
import { describe, expect, it } from 'vitest';
import { parseDurationMs, parseEnv } from '@/lib/env';
import { fixityBatchSize } from '@/lib/stewardship/fixity-plan';

const HOUR = 3_600_000;
const DAY = 24 * HOUR;

describe('fixityBatchSize', () => {
  it('covers every file within the period (worked example in the header)', () => {
    expect(fixityBatchSize(10_000, HOUR, 30)).toBe(14);
  });
  it('covers every file within the period for a range of counts and schedules', () => {
    for (const total of [1, 7, 719, 720, 721, 10_000, 123_457]) {
      for (const [every, days] of [
        [HOUR, 30],
        [15 * 60_000, 7],
        [DAY, 365],
        [7 * DAY, 30],
        [40 * DAY, 30],
      ] as const) {
        const batch = fixityBatchSize(total, every, days);
        const runs = Math.max(1, Math.floor((days * DAY) / every));
        expect(batch).toBeGreaterThanOrEqual(1);
        expect(batch).toBeLessThanOrEqual(total);
        expect(batch * runs).toBeGreaterThanOrEqual(total);
        // and not more than one file per run above what that needs
        expect((batch - 1) * runs).toBeLessThan(total);
      }
    }
  });
  it('checks everything when the schedule is off, nothing when nothing is stored', () => {
    expect(fixityBatchSize(42, 0, 30)).toBe(42);
    expect(fixityBatchSize(0, HOUR, 30)).toBe(0);
  });
});

describe('the fixity and archive environment', () => {
  const base = {
    APP_ORIGIN: 'http://127.0.0.1:3000',
    NEXTAUTH_URL: 'http://127.0.0.1:3000',
    NEXTAUTH_SECRET: 'x'.repeat(40),
    DB_HOST: '127.0.0.1',
    DB_PORT: '3307',
    DB_NAME: 'lobeline',
    DB_USER: 'lobeline',
    DB_PASSWORD: 'pw',
    REDIS_URL: 'redis://127.0.0.1:6380',
    SMTP_HOST: '127.0.0.1',
    SMTP_PORT: '2525',
    MAIL_FROM: 'no-reply@harbor-point.example',
    S3_REGION: 'us-east-1',
    S3_ACCESS_KEY_ID: 'a',
    S3_SECRET_ACCESS_KEY: 'b',
    S3_FORCE_PATH_STYLE: 'true',
    S3_BUCKET_RAW: 'lobeline-raw',
    S3_BUCKET_DERIVED: 'lobeline-derived',
    S3_BUCKET_ARCHIVE: 'lobeline-archive',
  };
  it('reads durations: 30m, 6h, 1d, off', () => {
    expect(parseDurationMs('30m')).toBe(30 * 60_000);
    expect(parseDurationMs('6h')).toBe(6 * HOUR);
    expect(parseDurationMs('1d')).toBe(DAY);
    expect(parseDurationMs('off')).toBe(0);
    expect(parseDurationMs('soon')).toBeNull();
  });
  it('has defaults: GLACIER_IR, 512 MiB parts, hourly, 30 days', () => {
    const env = parseEnv(base);
    expect(env.LOBELINE_ARCHIVE_STORAGE_CLASS).toBe('GLACIER_IR');
    expect(env.LOBELINE_ARCHIVE_PART_MIB).toBe(512);
    expect(env.LOBELINE_FIXITY_EVERY).toBe(HOUR);
    expect(env.LOBELINE_FIXITY_PERIOD_DAYS).toBe(30);
  });
  it('names the variable when a value is wrong', () => {
    expect(() => parseEnv({ ...base, LOBELINE_FIXITY_EVERY: '5s' })).toThrow(/LOBELINE_FIXITY_EVERY: invalid/);
    // a class that needs a thaw request before it can be read back is refused
    expect(() => parseEnv({ ...base, LOBELINE_ARCHIVE_STORAGE_CLASS: 'DEEP_ARCHIVE' })).toThrow(
      /LOBELINE_ARCHIVE_STORAGE_CLASS: invalid/,
    );
    expect(() => parseEnv({ ...base, LOBELINE_FIXITY_PERIOD_DAYS: '0' })).toThrow(/LOBELINE_FIXITY_PERIOD_DAYS/);
  });
});
