// Vitest setup for the integration project: refuses to run anywhere but against the TEST instance of the local
// services (scripts/services.ts, ports 3317/6390/9010/2535), and checks that they answer before any test runs.
// scripts/test.sh exports the test environment; when nothing is set (e.g. `npx vitest run --project integration`
// after `npm run services -- start --instance test`), the fixed test values are filled in.
import { resetEnvCache } from '@/lib/env';
import { instanceDefaults, PORTS, servicesAnswering } from '@/scripts/services';

const testDefaults = instanceDefaults('test');
if (!process.env.LOBELINE_INSTANCE && !process.env.DB_PORT) {
  for (const [k, v] of Object.entries(testDefaults)) if (process.env[k] === undefined) process.env[k] = v;
  resetEnvCache();
}

function portOf(url: string | undefined): number | null {
  try {
    return url ? Number(new URL(url).port) : null;
  } catch {
    return null;
  }
}

const expected = PORTS.test;
const seen = {
  LOBELINE_INSTANCE: process.env.LOBELINE_INSTANCE,
  DB_PORT: Number(process.env.DB_PORT),
  'port of REDIS_URL': portOf(process.env.REDIS_URL),
  'port of S3_ENDPOINT': portOf(process.env.S3_ENDPOINT),
  SMTP_PORT: Number(process.env.SMTP_PORT),
  'port of APP_ORIGIN': portOf(process.env.APP_ORIGIN),
};
const wrong: string[] = [];
if (seen.LOBELINE_INSTANCE !== 'test') wrong.push(`LOBELINE_INSTANCE is "${seen.LOBELINE_INSTANCE}", not "test"`);
if (seen.DB_PORT !== expected.db) wrong.push(`DB_PORT is ${seen.DB_PORT}, not ${expected.db}`);
if (seen['port of REDIS_URL'] !== expected.redis)
  wrong.push(`REDIS_URL port is ${seen['port of REDIS_URL']}, not ${expected.redis}`);
if (seen['port of S3_ENDPOINT'] !== expected.s3)
  wrong.push(`S3_ENDPOINT port is ${seen['port of S3_ENDPOINT']}, not ${expected.s3}`);
if (seen.SMTP_PORT !== expected.smtp) wrong.push(`SMTP_PORT is ${seen.SMTP_PORT}, not ${expected.smtp}`);
if (seen['port of APP_ORIGIN'] !== expected.app)
  wrong.push(`APP_ORIGIN port is ${seen['port of APP_ORIGIN']}, not ${expected.app}`);
if (process.env.DB_NAME === 'lobeline') wrong.push('DB_NAME is the dev database "lobeline"');
if (wrong.length) {
  throw new Error(
    `Integration tests run only against the TEST services, refusing to start:\n  - ${wrong.join('\n  - ')}\n` +
      'Run them through `npm test`, or unset the dev environment and start `npm run services -- start --instance test`.',
  );
}

const answering = await servicesAnswering('test');
const down = Object.entries(answering)
  .filter(([, ok]) => !ok)
  .map(([name]) => name);
if (down.length) {
  throw new Error(
    `The test services do not answer: ${down.join(', ')}. Start them with ` +
      '`npm run services -- start --instance test` (scripts/test.sh does this).',
  );
}
