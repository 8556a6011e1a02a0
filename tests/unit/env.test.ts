// lib/env.ts: every variable of the environment contract is checked, and a broken environment is reported in one
// error that names every missing or invalid variable with what it should be.
import { describe, expect, it } from 'vitest';
import { ENV_HELP, EnvError, parseEnv } from '@/lib/env';

const valid: Record<string, string> = {
  APP_ORIGIN: 'http://127.0.0.1:3000',
  NEXTAUTH_URL: 'http://127.0.0.1:3000',
  NEXTAUTH_SECRET: 'a-random-secret-that-is-long-enough-0123',
  DB_HOST: '127.0.0.1',
  DB_PORT: '3307',
  DB_NAME: 'lobeline',
  DB_USER: 'lobeline',
  DB_PASSWORD: 'pw',
  REDIS_URL: 'redis://127.0.0.1:6380',
  SMTP_HOST: '127.0.0.1',
  SMTP_PORT: '2525',
  MAIL_FROM: 'Lobeline <no-reply@harbor-point.example>',
  S3_ENDPOINT: 'http://127.0.0.1:9000',
  S3_REGION: 'us-east-1',
  S3_ACCESS_KEY_ID: 'key',
  S3_SECRET_ACCESS_KEY: 'secret',
  S3_FORCE_PATH_STYLE: 'true',
  S3_BUCKET_RAW: 'lobeline-raw',
  S3_BUCKET_DERIVED: 'lobeline-derived',
  S3_BUCKET_ARCHIVE: 'lobeline-archive',
};

const OPTIONAL = [
  'MAIL_CATCHER_DIR',
  'S3_ENDPOINT',
  'LOG_LEVEL',
  'TRUSTED_PROXY_HOPS',
  // archive and fixity (issue 14): defaults in lib/env.ts, checked in tests/unit/fixity-plan.test.ts
  'LOBELINE_ARCHIVE_STORAGE_CLASS',
  'LOBELINE_ARCHIVE_PART_MIB',
  'LOBELINE_FIXITY_EVERY',
  'LOBELINE_FIXITY_PERIOD_DAYS',
  'EVENT_SPLIT_EVENTS',
  'EVENT_CHUNK_JOB_EVENTS',
];
const REQUIRED = Object.keys(ENV_HELP).filter((k) => !OPTIONAL.includes(k));

function problemsOf(source: Record<string, string | undefined>) {
  try {
    parseEnv(source);
  } catch (err) {
    expect(err).toBeInstanceOf(EnvError);
    return err as EnvError;
  }
  throw new Error('parseEnv accepted the environment');
}

describe('parseEnv', () => {
  it('accepts a complete environment and converts types', () => {
    const env = parseEnv(valid);
    expect(env.DB_PORT).toBe(3307);
    expect(env.SMTP_PORT).toBe(2525);
    expect(env.S3_FORCE_PATH_STYLE).toBe(true);
    expect(env.LOG_LEVEL).toBe('info');
    expect(env.MAIL_CATCHER_DIR).toBeUndefined();
  });

  it('lists every missing required variable at once, with what it should be', () => {
    const err = problemsOf({});
    expect(err.problems.map((p) => p.name).sort()).toEqual([...REQUIRED].sort());
    expect(REQUIRED).toHaveLength(19);
    for (const name of REQUIRED) {
      expect(err.message).toContain(`${name}: missing. Expected: ${ENV_HELP[name as keyof typeof ENV_HELP]}`);
    }
  });

  it('treats blank values as missing', () => {
    const err = problemsOf({ ...valid, DB_PASSWORD: '  ', NEXTAUTH_SECRET: '' });
    expect(err.problems.map((p) => [p.name, p.problem])).toEqual([
      ['NEXTAUTH_SECRET', 'missing'],
      ['DB_PASSWORD', 'missing'],
    ]);
  });

  it('names invalid values and keeps valid ones out of the report', () => {
    const err = problemsOf({
      ...valid,
      APP_ORIGIN: 'http://127.0.0.1:3000/',
      DB_PORT: 'abc',
      SMTP_PORT: '70000',
      REDIS_URL: 'http://127.0.0.1:6380',
      S3_FORCE_PATH_STYLE: 'yes',
      S3_BUCKET_RAW: 'Raw_Files',
      NEXTAUTH_SECRET: 'short',
      LOG_LEVEL: 'loud',
    });
    expect(err.problems.map((p) => p.name)).toEqual([
      'APP_ORIGIN',
      'NEXTAUTH_SECRET',
      'DB_PORT',
      'REDIS_URL',
      'SMTP_PORT',
      'S3_FORCE_PATH_STYLE',
      'S3_BUCKET_RAW',
      'LOG_LEVEL',
    ]);
    expect(err.problems.every((p) => p.problem.startsWith('invalid'))).toBe(true);
  });

  it('reads TRUSTED_PROXY_HOPS as 0 when unset and refuses what is not 0–10', () => {
    expect(parseEnv(valid).TRUSTED_PROXY_HOPS).toBe(0);
    expect(parseEnv({ ...valid, TRUSTED_PROXY_HOPS: '2' }).TRUSTED_PROXY_HOPS).toBe(2);
    for (const bad of ['-1', 'two', '11']) {
      expect(problemsOf({ ...valid, TRUSTED_PROXY_HOPS: bad }).problems.map((p) => p.name)).toEqual([
        'TRUSTED_PROXY_HOPS',
      ]);
    }
  });

  it('allows an empty S3_ENDPOINT (AWS S3) and optional catcher folder and log level', () => {
    const env = parseEnv({
      ...valid,
      S3_ENDPOINT: '',
      S3_FORCE_PATH_STYLE: 'false',
      MAIL_CATCHER_DIR: '.data/dev/mail',
      LOG_LEVEL: 'DEBUG',
    });
    expect(env.S3_ENDPOINT).toBeUndefined();
    expect(env.S3_FORCE_PATH_STYLE).toBe(false);
    expect(env.MAIL_CATCHER_DIR).toBe('.data/dev/mail');
    expect(env.LOG_LEVEL).toBe('debug');
  });
});
