// LOAD (issue "hardening", point 13): 20 signed-in clients for 30 s each on the scan list API and on a scan page of
// the running, built app, over loopback, with autocannon (npm). Goal: p95 under 150 ms for the API on this machine.
//
//   tsx scripts/bench/load-app.ts [--seconds 30] [--connections 20]
//
// Run first: the app, built and started at APP_ORIGIN (`npm start` for dev; or, for the test instance, the steps of
// scripts/test.sh: services, migrate, seed, `next build`, `next start -p 3100`), and `npm run bench -- N5` once, whose
// 10 000 synthetic scans (team "n5-bench") are the list measured here. This script gives the N5 bench account a
// password (a fresh random one on every run; the account is synthetic), signs it in over HTTP once per client through
// the app's own sign-in endpoint, and gives each autocannon connection its own session cookie. p95 is computed from
// every response time autocannon reports (its summary has no 95th percentile); non-2xx answers are counted apart.
import { randomBytes } from 'node:crypto';
import { existsSync, readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs, parseEnv as parseDotEnv } from 'node:util';

const SELF = fileURLToPath(import.meta.url);
const REPO = path.resolve(path.dirname(SELF), '../..');
await import('../server-only-shim');

interface CannonClient {
  setHeaders(headers: Record<string, string>): void;
}
interface CannonInstance {
  on(event: 'response', fn: (client: unknown, statusCode: number, bytes: number, ms: number) => void): void;
}
interface CannonResult {
  requests: { total: number; average: number };
  non2xx: number;
  errors: number;
  timeouts: number;
}
type Cannon = (
  opts: Record<string, unknown>,
  done: (err: Error | null, result: CannonResult) => void,
) => CannonInstance;
const autocannon = createRequire(import.meta.url)('autocannon') as Cannon;

function loadDotEnv(): void {
  if (process.env.LOBELINE_INSTANCE === 'test') return;
  const file = path.join(REPO, '.env');
  if (!existsSync(file)) return;
  for (const [k, v] of Object.entries(parseDotEnv(readFileSync(file, 'utf8')))) {
    if (process.env[k] === undefined) process.env[k] = v;
  }
}

function percentile(sorted: number[], p: number): number {
  if (!sorted.length) return Number.NaN;
  const i = Math.min(sorted.length - 1, Math.max(0, Math.ceil((p / 100) * sorted.length) - 1));
  return sorted[i] as number;
}

/** Signs in through the app's credentials endpoint; returns the Cookie header of the new session. */
async function signIn(origin: string, email: string, password: string): Promise<string> {
  const jar = new Map<string, string>();
  const keep = (res: Response) => {
    for (const c of res.headers.getSetCookie()) {
      const [pair] = c.split(';');
      const eq = pair?.indexOf('=') ?? -1;
      if (pair && eq > 0) jar.set(pair.slice(0, eq), pair.slice(eq + 1));
    }
  };
  const cookie = () => [...jar].map(([k, v]) => `${k}=${v}`).join('; ');
  const csrfRes = await fetch(`${origin}/api/auth/csrf`);
  keep(csrfRes);
  const { csrfToken } = (await csrfRes.json()) as { csrfToken: string };
  const res = await fetch(`${origin}/api/auth/callback/credentials`, {
    method: 'POST',
    redirect: 'manual',
    headers: { 'content-type': 'application/x-www-form-urlencoded', cookie: cookie(), origin },
    body: new URLSearchParams({ csrfToken, email, password, json: 'true', callbackUrl: `${origin}/` }),
  });
  keep(res);
  const session = [...jar.keys()].find((k) => k.includes('session-token'));
  if (!session) throw new Error(`sign-in of ${email} gave no session cookie (HTTP ${res.status})`);
  return cookie();
}

async function run(
  url: string,
  cookies: string[],
  seconds: number,
): Promise<{ times: number[]; result: CannonResult }> {
  const times: number[] = [];
  let next = 0;
  const result = await new Promise<CannonResult>((resolve, reject) => {
    const inst = autocannon(
      {
        url,
        connections: cookies.length,
        duration: seconds,
        pipelining: 1,
        timeout: 20,
        setupClient: (client: CannonClient) => {
          client.setHeaders({ cookie: cookies[next++ % cookies.length] as string, accept: 'application/json' });
        },
      },
      (err, res) => (err ? reject(err) : resolve(res)),
    );
    inst.on('response', (_c, status, _b, ms) => {
      if (status >= 200 && status < 300) times.push(ms);
    });
  });
  times.sort((a, b) => a - b);
  return { times, result };
}

function line(label: string, r: { times: number[]; result: CannonResult }, seconds: number, goal?: number): string {
  const p = (x: number) => `${percentile(r.times, x).toFixed(0)} ms`;
  const p95 = percentile(r.times, 95);
  const verdict = goal === undefined ? '' : `   (goal p95 < ${goal} ms: ${p95 < goal ? 'met' : 'NOT met'})`;
  return (
    `  ${label.padEnd(22)} ${(r.times.length / seconds).toFixed(1).padStart(6)} req/s   p50 ${p(50)}   p95 ${p(95)}   ` +
    `p99 ${p(99)}   max ${p(100)}   non-2xx ${r.result.non2xx}, errors ${r.result.errors}, timeouts ${r.result.timeouts}${verdict}`
  );
}

async function main(): Promise<number> {
  const { values } = parseArgs({ options: { seconds: { type: 'string' }, connections: { type: 'string' } } });
  const seconds = Math.max(5, Math.min(120, Number(values.seconds ?? 30)));
  const connections = Math.max(1, Math.min(100, Number(values.connections ?? 20)));
  loadDotEnv();
  const { EnvError, getEnv } = await import('@/lib/env');
  let origin: string;
  try {
    origin = getEnv().APP_ORIGIN.replace(/\/$/, '');
  } catch (err) {
    if (err instanceof EnvError) {
      console.log(
        '  not measured: no app environment; run `npm start` once (it writes .env and starts the app) first.',
      );
      return 0;
    }
    throw err;
  }
  const up = await fetch(`${origin}/api/ping`).then(
    (r) => r.ok,
    () => false,
  );
  if (!up) {
    console.log(`  not measured: the app does not answer at ${origin}; start it first (npm start, or next start).`);
    return 0;
  }
  const { getDb, closeSequelize } = await import('@/lib/db');
  const { hashPassword } = await import('@/lib/auth/password');
  const { Campaign, Team, User } = await import('@/models');
  getDb();
  const team = await Team.findOne({ where: { slug: 'n5-bench' } });
  const user = await User.findOne({ where: { email: 'n5-bench@harbor-point.example' } });
  const campaign = team && (await Campaign.findOne({ where: { team_id: team.id, name: 'N5 bench campaign' } }));
  if (!team || !user || !campaign) {
    console.log('  not measured: the N5 bench data is missing; run `npm run bench -- N5` first.');
    await closeSequelize();
    return 0;
  }
  const password = `load-${randomBytes(12).toString('hex')}`;
  await user.update({ password_hash: await hashPassword(password), is_active: true });
  await closeSequelize();

  const cookies: string[] = [];
  for (let i = 0; i < connections; i++) cookies.push(await signIn(origin, user.email, password));
  const apiUrl = `${origin}/api/campaigns/${campaign.id}/scans?page=1&pageSize=25&sort=uploaded&dir=desc`;
  const first = await fetch(apiUrl, { headers: { cookie: cookies[0] as string } });
  if (!first.ok) throw new Error(`the scan list answers HTTP ${first.status} to a signed-in client`);
  const body = (await first.json()) as { rows?: { id: number }[]; data?: { rows?: { id: number }[] } };
  const scanId = (body.rows ?? body.data?.rows ?? [])[0]?.id;
  if (!scanId) throw new Error('the scan list is empty');
  const pageUrl = `${origin}/scans/${scanId}`;
  const page = await fetch(pageUrl, { headers: { cookie: cookies[0] as string }, redirect: 'manual' });
  if (page.status !== 200) throw new Error(`the scan page answers HTTP ${page.status} to a signed-in client`);

  console.log(
    `LOAD: ${connections} signed-in clients, ${seconds} s per target, autocannon against ${origin} (loopback), ` +
      `campaign of 10 000 scans`,
  );
  const api = await run(apiUrl, cookies, seconds);
  console.log(line('scan list API', api, seconds, 150));
  const html = await run(pageUrl, cookies, seconds);
  console.log(line(`scan page /scans/${scanId}`, html, seconds));
  console.log(
    '  response times of 2xx answers from autocannon, percentiles computed here; the app, MariaDB and autocannon share the cores',
  );
  return 0;
}

main().then(
  (code) => process.exit(code),
  (err) => {
    console.error(err);
    process.exit(1);
  },
);
