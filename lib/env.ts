// The one place where the environment is read and checked (zod). Importable by Next server code and by tsx
// scripts alike: no 'server-only' here, and no file access (scripts load `.env` themselves before calling getEnv).
import { z } from 'zod';

/** Treat unset and blank the same: both are "missing". */
const blank = (v: unknown) => (typeof v === 'string' && v.trim() === '' ? undefined : v);

const required = <T extends z.ZodType>(schema: T) => z.preprocess(blank, schema);

const portMsg = 'a whole number from 1 to 65535';
const port = z.coerce.number({ error: portMsg }).int(portMsg).min(1, portMsg).max(65535, portMsg);
const sqlName = z.string().regex(/^[A-Za-z0-9_]{1,64}$/, 'letters, digits and _ only (at most 64)');
const bucket = z
  .string()
  .regex(/^[a-z0-9][a-z0-9.-]{1,61}[a-z0-9]$/, '3–63 lower-case letters, digits, dots or hyphens (S3 bucket rules)');
const httpUrl = z.url({ protocol: /^https?$/ });
/** A duration such as 90s, 15m, 6h or 1d (archive and fixity schedule, issue 14); `off` is 0. */
const DURATION_UNITS_MS = { s: 1_000, m: 60_000, h: 3_600_000, d: 86_400_000 } as const;
export function parseDurationMs(v: string): number | null {
  const t = v.trim().toLowerCase();
  if (t === 'off' || t === '0') return 0;
  const m = /^(\d{1,6})\s*(s|m|h|d)$/.exec(t);
  return m ? Number(m[1]) * DURATION_UNITS_MS[m[2] as keyof typeof DURATION_UNITS_MS] : null;
}
const duration = z.string().transform((v, ctx) => {
  const ms = parseDurationMs(v);
  if (ms === null || (ms > 0 && ms < 10_000)) {
    ctx.addIssue({ code: 'custom', message: 'a duration of at least 10s such as 30m, 6h or 1d, or off' });
    return z.NEVER;
  }
  return ms;
});
/**
 * Storage classes an archived copy may get: the ones S3 reads back at once, so that the copy can be verified,
 * re-hashed by the fixity checks and restored without a thaw request (GLACIER and DEEP_ARCHIVE need one first;
 * Lobeline does not send that request yet).
 */
export const ARCHIVE_STORAGE_CLASSES = [
  'GLACIER_IR',
  'STANDARD_IA',
  'ONEZONE_IA',
  'INTELLIGENT_TIERING',
  'STANDARD',
] as const;
const origin = httpUrl.refine((v) => new URL(v).origin === v, 'an origin: scheme://host[:port] with no path or slash');

/** What each variable should be: shown when it is missing or invalid. */
export const ENV_HELP = {
  APP_ORIGIN: 'origin the browser uses for the app, e.g. http://127.0.0.1:3000 (no trailing slash)',
  NEXTAUTH_URL: 'public URL of the app for next-auth, normally the same as APP_ORIGIN',
  NEXTAUTH_SECRET: 'random secret of at least 32 characters (e.g. `openssl rand -base64 48`)',
  DB_HOST: 'MariaDB host, e.g. 127.0.0.1',
  DB_PORT: 'MariaDB TCP port, e.g. 3307 (dev) or 3317 (test)',
  DB_NAME: 'MariaDB database name, e.g. lobeline',
  DB_USER: 'MariaDB user with all privileges on DB_NAME',
  DB_PASSWORD: 'password of DB_USER',
  REDIS_URL: 'Redis URL for the job queue, e.g. redis://127.0.0.1:6380',
  SMTP_HOST: 'SMTP host for outgoing mail, e.g. 127.0.0.1 (the local catcher)',
  SMTP_PORT: 'SMTP port, e.g. 2525 (dev) or 2535 (test)',
  MAIL_FROM: 'sender of Lobeline e-mails, e.g. "Lobeline <no-reply@harbor-point.example>"',
  MAIL_CATCHER_DIR: 'optional (dev/test): folder where the SMTP catcher stores messages, e.g. .data/dev/mail',
  S3_ENDPOINT: 'optional: S3 endpoint URL, e.g. http://127.0.0.1:9000; leave empty for AWS S3',
  S3_REGION: 'S3 region, e.g. us-east-1',
  S3_ACCESS_KEY_ID: 'S3 access key id',
  S3_SECRET_ACCESS_KEY: 'S3 secret access key',
  S3_FORCE_PATH_STYLE: 'true for MinIO and the local S3 service, false for AWS S3',
  S3_BUCKET_RAW: 'bucket for raw detector files, e.g. lobeline-raw',
  S3_BUCKET_DERIVED: 'bucket for derived arrays (calibrated images, maps), e.g. lobeline-derived',
  S3_BUCKET_ARCHIVE: 'bucket for archived raw files, e.g. lobeline-archive',
  LOBELINE_ARCHIVE_STORAGE_CLASS:
    'optional: S3 storage class of archived copies, one of GLACIER_IR, STANDARD_IA, ONEZONE_IA, INTELLIGENT_TIERING, STANDARD (default GLACIER_IR)',
  LOBELINE_ARCHIVE_PART_MIB:
    'optional: objects larger than this many MiB are archived and restored as a multipart copy of parts this size (5–5120, default 512)',
  LOBELINE_FIXITY_EVERY:
    'optional: how often the fixity job runs, e.g. 1h, 30m, 1d, or off (default 1h); each run re-hashes a share of the stored files',
  LOBELINE_FIXITY_PERIOD_DAYS:
    'optional: every stored file is re-hashed at least once in this many days (1–3650, default 30)',
  LOG_LEVEL: 'optional: debug, info, warn or error (default info)',
  TRUSTED_PROXY_HOPS:
    'optional: how many reverse proxies in front of Lobeline append to x-forwarded-for (default 0: the client address is the socket address)',
  EVENT_SPLIT_EVENTS:
    'optional: event files with more events than this are reduced as chunk jobs spread over the workers (default 20000000)',
  EVENT_CHUNK_JOB_EVENTS: 'optional: events per chunk job of a split event file (default 5000000)',
} as const;

export const envSchema = z.object({
  APP_ORIGIN: required(origin),
  NEXTAUTH_URL: required(httpUrl),
  NEXTAUTH_SECRET: required(z.string().min(32, 'at least 32 characters')),
  DB_HOST: required(z.string().min(1)),
  DB_PORT: required(port),
  DB_NAME: required(sqlName),
  DB_USER: required(sqlName),
  DB_PASSWORD: required(z.string().min(1)),
  REDIS_URL: required(z.url({ protocol: /^rediss?$/ })),
  SMTP_HOST: required(z.string().min(1)),
  SMTP_PORT: required(port),
  MAIL_FROM: required(z.string().regex(/^[^<>@\s]+@[^<>@\s]+$|^[^<>]*<[^<>@\s]+@[^<>@\s]+>$/, 'an e-mail address')),
  MAIL_CATCHER_DIR: z.preprocess(blank, z.string().optional()),
  S3_ENDPOINT: z.preprocess(blank, httpUrl.optional()),
  S3_REGION: required(z.string().min(1)),
  S3_ACCESS_KEY_ID: required(z.string().min(1)),
  S3_SECRET_ACCESS_KEY: required(z.string().min(1)),
  S3_FORCE_PATH_STYLE: required(z.enum(['true', 'false'], 'true or false').transform((v) => v === 'true')),
  S3_BUCKET_RAW: required(bucket),
  S3_BUCKET_DERIVED: required(bucket),
  S3_BUCKET_ARCHIVE: required(bucket),
  LOBELINE_ARCHIVE_STORAGE_CLASS: z.preprocess(blank, z.enum(ARCHIVE_STORAGE_CLASSES).default('GLACIER_IR')),
  LOBELINE_ARCHIVE_PART_MIB: z.preprocess(blank, z.coerce.number().int().min(5).max(5120).default(512)),
  LOBELINE_FIXITY_EVERY: z.preprocess(blank, duration.default(3_600_000)),
  LOBELINE_FIXITY_PERIOD_DAYS: z.preprocess(blank, z.coerce.number().int().min(1).max(3650).default(30)),
  LOG_LEVEL: z.preprocess(
    (v) => (typeof v === 'string' ? blank(v.toLowerCase()) : v),
    z.enum(['debug', 'info', 'warn', 'error']).default('info'),
  ),
  TRUSTED_PROXY_HOPS: z.preprocess(blank, z.coerce.number().int().min(0).max(10).default(0)),
  // event files spread over workers (lib/queue/event-flow.ts)
  EVENT_SPLIT_EVENTS: z.preprocess(blank, z.coerce.number().int().min(1).default(20_000_000)),
  EVENT_CHUNK_JOB_EVENTS: z.preprocess(
    blank,
    z.coerce
      .number()
      .int()
      .min(1000)
      .max(2 ** 31)
      .default(5_000_000),
  ),
});

export type Env = z.infer<typeof envSchema>;
export type EnvName = keyof typeof ENV_HELP;

export class EnvError extends Error {
  readonly problems: { name: string; problem: string; expected: string }[];
  constructor(problems: { name: string; problem: string; expected: string }[]) {
    const lines = problems.map((p) => `  - ${p.name}: ${p.problem}. Expected: ${p.expected}.`);
    super(
      `Lobeline's environment is not complete (${problems.length} problem${problems.length === 1 ? '' : 's'}):\n` +
        `${lines.join('\n')}\nSet these in .env (see .env.example and minio.env.example) or in the environment.`,
    );
    this.name = 'EnvError';
    this.problems = problems;
  }
}

/** Parses a given environment object (pure; for tests and scripts). Throws EnvError listing every problem. */
export function parseEnv(source: Record<string, string | undefined>): Env {
  const result = envSchema.safeParse(source);
  if (result.success) return result.data;
  const problems = result.error.issues.map((issue) => {
    const name = String(issue.path[0] ?? '(environment)');
    const raw = source[name];
    const missing = raw === undefined || raw.trim() === '';
    return {
      name,
      problem: missing ? 'missing' : `invalid (${issue.message})`,
      expected: ENV_HELP[name as EnvName] ?? 'see .env.example',
    };
  });
  // One line per variable, in the order of the schema.
  const order = Object.keys(ENV_HELP);
  const byName = new Map<string, (typeof problems)[number]>();
  for (const p of problems) if (!byName.has(p.name)) byName.set(p.name, p);
  const unique = [...byName.values()].sort((a, b) => order.indexOf(a.name) - order.indexOf(b.name));
  throw new EnvError(unique);
}

let cached: Env | undefined;

/** The parsed environment, read from process.env once and cached. */
export function getEnv(): Env {
  if (!cached) cached = parseEnv(process.env);
  return cached;
}

/** For tests and scripts that change process.env. */
export function resetEnvCache(): void {
  cached = undefined;
}
