// Local data services of one Lobeline instance, all on 127.0.0.1 with their data under .data/<instance>/:
//   MariaDB (Debian mariadb-server), Redis (Debian redis-server) and one Node process (scripts/local-services.ts)
//   holding the S3-compatible service and the SMTP catcher.
//
//   tsx scripts/services.ts start  --instance dev|test [--fresh]   start what is not running (idempotent)
//   tsx scripts/services.ts stop   --instance dev|test             stop everything cleanly
//   tsx scripts/services.ts status --instance dev|test             what runs and answers (exit 1 if not all)
//   tsx scripts/services.ts wait   --instance dev|test [--timeout S]
//   tsx scripts/services.ts env    --instance dev|test             print `export NAME='value'` lines
//   … start|stop --only mariadb|redis|s3 …                         one service only (s3 and the SMTP catcher share
//                                                                   one process, so `--only s3` stops both)
//
// Besides dev and test there are private test instances, `test-<name>` (e.g. test-outage-db): the test values with
// their own data folder and the ports given in the environment (DB_PORT, REDIS_URL, S3_ENDPOINT, SMTP_PORT,
// APP_ORIGIN); tests that take a service away use one so that the shared test instance never goes down.
//
// Ports: dev 3307/6380/9000/2525, test 3317/6390/9010/2535; overridable by DB_PORT, the port of REDIS_URL, the port
// of S3_ENDPOINT and SMTP_PORT. The dev instance also reads `.env` (values already in the environment win).
import { spawn, spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { existsSync, mkdirSync, openSync, readFileSync, rmSync, unlinkSync, writeFileSync } from 'node:fs';
import http from 'node:http';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { parseArgs, parseEnv as parseDotEnv } from 'node:util';
import mariadb from 'mariadb';

export type Instance = 'dev' | 'test' | `test-${string}`;
type ServiceName = 'mariadb' | 'redis' | 's3' | 'smtp';
export type SingleService = 'mariadb' | 'redis' | 's3';

/** A private test instance: `test-` and lower-case letters, digits and dashes. */
export function isPrivateInstance(name: string): name is `test-${string}` {
  return /^test-[a-z0-9][a-z0-9-]{0,30}$/.test(name);
}

export const REPO_ROOT = path.resolve(fileURLToPath(new URL('..', import.meta.url)));

export const PORTS: Record<'dev' | 'test', { app: number; db: number; s3: number; redis: number; smtp: number }> = {
  dev: { app: 3000, db: 3307, s3: 9000, redis: 6380, smtp: 2525 },
  test: { app: 3100, db: 3317, s3: 9010, redis: 6390, smtp: 2535 },
};

/**
 * The environment of an instance without secrets from .env. For `test` this is complete and fixed (scripts/test.sh
 * and the integration tests use exactly these values); for `dev` the secrets come from `.env`.
 */
export function instanceDefaults(instance: Instance): Record<string, string> {
  if (isPrivateInstance(instance)) {
    // The test values with a data folder of its own; the ports must come from the environment (checkPorts).
    return { ...instanceDefaults('test'), LOBELINE_INSTANCE: instance, MAIL_CATCHER_DIR: `.data/${instance}/mail` };
  }
  const p = PORTS[instance as 'dev' | 'test'];
  const origin = `http://127.0.0.1:${p.app}`;
  const common: Record<string, string> = {
    LOBELINE_INSTANCE: instance,
    APP_ORIGIN: origin,
    NEXTAUTH_URL: origin,
    DB_HOST: '127.0.0.1',
    DB_PORT: String(p.db),
    REDIS_URL: `redis://127.0.0.1:${p.redis}`,
    SMTP_HOST: '127.0.0.1',
    SMTP_PORT: String(p.smtp),
    MAIL_CATCHER_DIR: `.data/${instance}/mail`,
    S3_ENDPOINT: `http://127.0.0.1:${p.s3}`,
    S3_REGION: 'us-east-1',
    S3_FORCE_PATH_STYLE: 'true',
    NEXT_TELEMETRY_DISABLED: '1',
  };
  if (instance === 'dev') {
    return {
      ...common,
      DB_NAME: 'lobeline',
      DB_USER: 'lobeline',
      MAIL_FROM: 'Lobeline <no-reply@harbor-point.example>',
      S3_BUCKET_RAW: 'lobeline-raw',
      S3_BUCKET_DERIVED: 'lobeline-derived',
      S3_BUCKET_ARCHIVE: 'lobeline-archive',
      LOG_LEVEL: 'info',
    };
  }
  return {
    ...common,
    NEXTAUTH_SECRET: 'lobeline-test-secret-fixed-for-tests-only-0123456789',
    DB_NAME: 'lobeline_test',
    DB_USER: 'lobeline_test',
    DB_PASSWORD: 'lobeline-test-password',
    MAIL_FROM: 'Lobeline (test) <no-reply@harbor-point.example>',
    S3_ACCESS_KEY_ID: 'lobeline-test',
    S3_SECRET_ACCESS_KEY: 'lobeline-test-secret-key',
    S3_BUCKET_RAW: 'lobeline-test-raw',
    S3_BUCKET_DERIVED: 'lobeline-test-derived',
    S3_BUCKET_ARCHIVE: 'lobeline-test-archive',
    LOG_LEVEL: 'warn',
  };
}

function readDotEnv(): Record<string, string> {
  const file = path.join(REPO_ROOT, '.env');
  if (!existsSync(file)) return {};
  return parseDotEnv(readFileSync(file, 'utf8')) as Record<string, string>;
}

interface Config {
  instance: Instance;
  env: Record<string, string>;
  dataDir: string;
  runDir: string;
  logDir: string;
  mariadbDir: string;
  socket: string;
  ports: { db: number; redis: number; s3: number; smtp: number };
  localS3: boolean;
}

function portOf(url: string | undefined, fallback: number): number {
  if (!url) return fallback;
  try {
    const u = new URL(url);
    return u.port ? Number(u.port) : fallback;
  } catch {
    return fallback;
  }
}

function isLoopback(url: string | undefined): boolean {
  if (!url) return false;
  try {
    return ['127.0.0.1', 'localhost', '[::1]'].includes(new URL(url).hostname);
  } catch {
    return false;
  }
}

/**
 * The configuration of an instance. `envOverride` replaces the process environment (a test that manages a private
 * instance passes its ports here and keeps its own environment on the test instance).
 */
export function resolveConfig(instance: Instance, envOverride?: Record<string, string>): Config {
  const fromEnv =
    envOverride ??
    Object.fromEntries(
      Object.entries(process.env).filter((e): e is [string, string] => typeof e[1] === 'string' && e[1] !== ''),
    );
  const env: Record<string, string> = {
    ...instanceDefaults(instance),
    ...(instance === 'dev' && process.env.LOBELINE_INSTANCE !== 'test' ? readDotEnv() : {}),
    ...fromEnv,
    LOBELINE_INSTANCE: instance,
  };
  const p = PORTS[isPrivateInstance(instance) ? 'test' : instance];
  const dataDir = path.join(REPO_ROOT, '.data', instance);
  const runDir = path.join(dataDir, 'run');
  let socket = path.join(runDir, 'mariadb.sock');
  if (socket.length > 100) {
    // Unix socket paths are limited to ~107 bytes.
    const tag = createHash('sha256').update(dataDir).digest('hex').slice(0, 10);
    socket = path.join(os.tmpdir(), `lobeline-${instance}-${tag}.sock`);
  }
  const localS3 = isLoopback(env.S3_ENDPOINT);
  return {
    instance,
    env,
    dataDir,
    runDir,
    logDir: path.join(dataDir, 'logs'),
    mariadbDir: path.join(dataDir, 'mariadb'),
    socket,
    ports: {
      db: Number(env.DB_PORT ?? p.db),
      redis: portOf(env.REDIS_URL, p.redis),
      s3: portOf(env.S3_ENDPOINT, p.s3),
      smtp: Number(env.SMTP_PORT ?? p.smtp),
    },
    localS3,
  };
}

/** Refuses a set-up where this instance would take a port of the other instance. */
function checkPorts(cfg: Config): void {
  const others = isPrivateInstance(cfg.instance)
    ? [PORTS.dev, PORTS.test]
    : [PORTS[cfg.instance === 'dev' ? 'test' : 'dev']];
  const clashes = (Object.keys(cfg.ports) as (keyof Config['ports'])[]).filter((k) =>
    others.some((other) => cfg.ports[k] === other[k] || cfg.ports[k] === other.app),
  );
  if (clashes.length) {
    throw new Error(
      `the ${cfg.instance} instance is configured with ports of the other instance (${clashes
        .map((k) => `${k} ${cfg.ports[k]}`)
        .join(', ')}). Check DB_PORT, REDIS_URL, S3_ENDPOINT and SMTP_PORT in your environment.`,
    );
  }
  for (const [k, v] of Object.entries(cfg.ports)) {
    if (!Number.isInteger(v) || v < 1 || v > 65535) throw new Error(`invalid ${k} port: ${v}`);
  }
}

// ---------- probes ----------

function tcpProbe(port: number, check: (data: Buffer) => boolean, send?: string, timeoutMs = 1500): Promise<boolean> {
  return new Promise((resolve) => {
    const socket = net.connect({ host: '127.0.0.1', port });
    let buf = Buffer.alloc(0);
    let done = false;
    const finish = (ok: boolean) => {
      if (done) return;
      done = true;
      socket.destroy();
      resolve(ok);
    };
    socket.setTimeout(timeoutMs, () => finish(false));
    socket.on('error', () => finish(false));
    socket.on('connect', () => {
      if (send) socket.write(send);
    });
    socket.on('data', (d) => {
      buf = Buffer.concat([buf, d]);
      if (check(buf)) finish(true);
      else if (buf.length > 4096) finish(false);
    });
    socket.on('end', () => finish(check(buf)));
  });
}

function httpProbe(port: number, timeoutMs = 1500): Promise<boolean> {
  return new Promise((resolve) => {
    const req = http.get({ host: '127.0.0.1', port, path: '/', timeout: timeoutMs }, (res) => {
      res.resume();
      // s3rver answers every request with an XML body; any status proves it is serving.
      resolve(typeof res.statusCode === 'number');
    });
    req.on('timeout', () => {
      req.destroy();
      resolve(false);
    });
    req.on('error', () => resolve(false));
  });
}

const probes: Record<ServiceName, (cfg: Config) => Promise<boolean>> = {
  // MariaDB greets with a handshake packet: 3-byte length, sequence id, protocol version 10.
  mariadb: (cfg) => tcpProbe(cfg.ports.db, (b) => b.length >= 5 && b[4] === 10),
  redis: (cfg) => tcpProbe(cfg.ports.redis, (b) => b.toString().startsWith('+PONG'), 'PING\r\n'),
  s3: (cfg) => httpProbe(cfg.ports.s3),
  smtp: (cfg) => tcpProbe(cfg.ports.smtp, (b) => b.toString().startsWith('220') && b.includes('\n'), undefined),
};

/** Which services of an instance answer right now (used by tests/integration/setup.ts). */
export async function servicesAnswering(instance: Instance): Promise<Record<ServiceName, boolean>> {
  const cfg = resolveConfig(instance);
  const names: ServiceName[] = ['mariadb', 'redis', 's3', 'smtp'];
  const results = await Promise.all(names.map((s) => (s === 's3' && !cfg.localS3 ? true : probes[s](cfg))));
  return Object.fromEntries(names.map((s, i) => [s, results[i] ?? false])) as Record<ServiceName, boolean>;
}

// ---------- processes ----------

interface Proc {
  name: 'mariadb' | 'redis' | 'local';
  label: string;
  pidFile: string;
  marker: string; // expected in /proc/<pid>/cmdline
  serves: ServiceName[];
}

function procs(cfg: Config): Proc[] {
  const list: Proc[] = [
    {
      name: 'mariadb',
      label: 'MariaDB',
      pidFile: path.join(cfg.runDir, 'mariadb.pid'),
      marker: 'mariadbd',
      serves: ['mariadb'],
    },
    {
      name: 'redis',
      label: 'Redis',
      pidFile: path.join(cfg.runDir, 'redis.pid'),
      marker: 'redis-server',
      serves: ['redis'],
    },
    {
      name: 'local',
      label: cfg.localS3 ? 'S3 + SMTP catcher' : 'SMTP catcher',
      pidFile: path.join(cfg.runDir, 'local-services.pid'),
      marker: 'local-services',
      serves: cfg.localS3 ? ['s3', 'smtp'] : ['smtp'],
    },
  ];
  return list;
}

function readPid(file: string): number | null {
  try {
    const pid = Number(readFileSync(file, 'utf8').trim());
    return Number.isInteger(pid) && pid > 0 ? pid : null;
  } catch {
    return null;
  }
}

function alive(pid: number, marker?: string): boolean {
  try {
    process.kill(pid, 0);
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code !== 'EPERM') return false;
  }
  if (!marker) return true;
  try {
    const cmd = readFileSync(`/proc/${pid}/cmdline`, 'utf8');
    if (cmd.includes('<defunct>') || cmd === '') return false;
    return cmd.includes(marker);
  } catch {
    return !existsSync('/proc/self'); // no /proc at all: trust kill(0)
  }
}

function runningPid(p: Proc): number | null {
  const pid = readPid(p.pidFile);
  return pid && alive(pid, p.marker) ? pid : null;
}

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

async function waitUntil(fn: () => Promise<boolean> | boolean, timeoutMs: number, stepMs = 100): Promise<boolean> {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    if (await fn()) return true;
    await sleep(stepMs);
  }
  return fn();
}

function tail(file: string, lines = 15): string {
  try {
    return readFileSync(file, 'utf8').trimEnd().split('\n').slice(-lines).join('\n');
  } catch {
    return '(no log)';
  }
}

function need(bin: string, pkg: string): void {
  const r = spawnSync('sh', ['-c', `command -v ${bin}`], { encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`${bin} not found; install the Debian package ${pkg} (npm start does this)`);
}

function spawnDetached(cmd: string, args: string[], logFile: string, env: NodeJS.ProcessEnv) {
  const out = openSync(logFile, 'a');
  const child = spawn(cmd, args, { cwd: REPO_ROOT, detached: true, stdio: ['ignore', out, out], env });
  let exited: number | null | undefined;
  child.on('exit', (code, signal) => {
    exited = code ?? (signal ? -1 : null);
  });
  child.unref();
  return { pid: child.pid ?? 0, hasExited: () => exited !== undefined, exitCode: () => exited };
}

// ---------- MariaDB ----------

function mariadbUser(): string {
  return process.getuid?.() === 0 ? 'root' : os.userInfo().username;
}

function sqlIdent(name: string, what: string): string {
  if (!/^[A-Za-z0-9_]{1,64}$/.test(name)) throw new Error(`${what} "${name}" must be letters, digits and _ only`);
  return name;
}

async function ensureDatabase(cfg: Config): Promise<void> {
  const db = sqlIdent(cfg.env.DB_NAME ?? '', 'DB_NAME');
  const user = sqlIdent(cfg.env.DB_USER ?? '', 'DB_USER');
  const password = cfg.env.DB_PASSWORD;
  if (!password) throw new Error('DB_PASSWORD is not set (dev: create .env from .env.example; npm start does this)');
  const conn = await mariadb.createConnection({ socketPath: cfg.socket, user: 'root', connectTimeout: 5000 });
  try {
    await conn.query(`CREATE DATABASE IF NOT EXISTS \`${db}\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci`);
    for (const host of ['127.0.0.1', 'localhost']) {
      await conn.query(`CREATE USER IF NOT EXISTS '${user}'@'${host}' IDENTIFIED BY ?`, [password]);
      await conn.query(`ALTER USER '${user}'@'${host}' IDENTIFIED BY ?`, [password]);
      await conn.query(`GRANT ALL PRIVILEGES ON \`${db}\`.* TO '${user}'@'${host}'`);
    }
  } finally {
    await conn.end();
  }
}

async function startMariadb(cfg: Config, p: Proc): Promise<string> {
  need('mariadbd', 'mariadb-server');
  need('mariadb-install-db', 'mariadb-server');
  const log = path.join(cfg.logDir, 'mariadb.log');
  if (!existsSync(path.join(cfg.mariadbDir, 'mysql'))) {
    mkdirSync(cfg.mariadbDir, { recursive: true });
    const r = spawnSync(
      'mariadb-install-db',
      [
        '--no-defaults',
        `--datadir=${cfg.mariadbDir}`,
        `--user=${mariadbUser()}`,
        '--auth-root-authentication-method=normal',
        '--skip-test-db',
      ],
      { encoding: 'utf8' },
    );
    writeFileSync(path.join(cfg.logDir, 'mariadb-install.log'), `${r.stdout ?? ''}\n${r.stderr ?? ''}`);
    if (r.status !== 0) {
      rmSync(cfg.mariadbDir, { recursive: true, force: true });
      throw new Error(`mariadb-install-db failed (see ${path.join(cfg.logDir, 'mariadb-install.log')}):\n${r.stderr}`);
    }
  }
  const args = [
    '--no-defaults',
    `--datadir=${cfg.mariadbDir}`,
    `--socket=${cfg.socket}`,
    `--pid-file=${p.pidFile}`,
    `--port=${cfg.ports.db}`,
    '--bind-address=127.0.0.1',
    `--user=${mariadbUser()}`,
    '--skip-name-resolve',
    `--log-error=${log}`,
    '--character-set-server=utf8mb4',
    '--collation-server=utf8mb4_unicode_ci',
    // 1 keeps real warnings but not one line per health probe ("Aborted connection ... unauthenticated").
    '--log-warnings=1',
    ...(cfg.instance !== 'dev' ? ['--innodb-flush-log-at-trx-commit=2'] : []),
  ];
  const child = spawnDetached('mariadbd', args, log, process.env);
  writeFileSync(p.pidFile, String(child.pid));
  const ok = await waitUntil(async () => child.hasExited() || (await probes.mariadb(cfg)), 30_000);
  if (!ok || child.hasExited()) {
    throw new Error(`MariaDB did not start (exit ${child.exitCode()}). Last lines of ${log}:\n${tail(log)}`);
  }
  return `pid ${child.pid}`;
}

async function stopMariadb(cfg: Config, p: Proc, pid: number): Promise<void> {
  spawnSync('mariadb-admin', ['--no-defaults', `--socket=${cfg.socket}`, '-uroot', 'shutdown'], {
    encoding: 'utf8',
    timeout: 30_000,
  });
  if (!(await waitUntil(() => !alive(pid, p.marker), 30_000))) await terminate(pid, p.marker);
}

// ---------- Redis ----------

async function startRedis(cfg: Config, p: Proc): Promise<string> {
  need('redis-server', 'redis-server');
  const dir = path.join(cfg.dataDir, 'redis');
  mkdirSync(dir, { recursive: true });
  const log = path.join(cfg.logDir, 'redis.log');
  const args = [
    '--port',
    String(cfg.ports.redis),
    '--bind',
    '127.0.0.1',
    '--save',
    '',
    '--appendonly',
    'no',
    '--daemonize',
    'no',
    '--dir',
    dir,
  ];
  const child = spawnDetached('redis-server', args, log, process.env);
  writeFileSync(p.pidFile, String(child.pid));
  const ok = await waitUntil(async () => child.hasExited() || (await probes.redis(cfg)), 15_000);
  if (!ok || child.hasExited()) {
    throw new Error(`Redis did not start (exit ${child.exitCode()}). Last lines of ${log}:\n${tail(log)}`);
  }
  return `pid ${child.pid}`;
}

// ---------- S3 + SMTP (one node process) ----------

async function startLocal(cfg: Config, p: Proc): Promise<string> {
  const log = path.join(cfg.logDir, 'local-services.log');
  const env: NodeJS.ProcessEnv = {
    ...process.env,
    ...cfg.env,
    LOBELINE_DATA_DIR: cfg.dataDir,
    LOBELINE_LOCAL_S3: cfg.localS3 ? '1' : '0',
    S3_ENDPOINT: `http://127.0.0.1:${cfg.ports.s3}`,
    SMTP_PORT: String(cfg.ports.smtp),
    MAIL_CATCHER_DIR: path.resolve(REPO_ROOT, cfg.env.MAIL_CATCHER_DIR ?? `.data/${cfg.instance}/mail`),
  };
  for (const k of ['S3_ACCESS_KEY_ID', 'S3_SECRET_ACCESS_KEY', 'APP_ORIGIN'] as const) {
    if (cfg.localS3 && !env[k]) throw new Error(`${k} is not set (dev: create .env from .env.example)`);
  }
  const script = path.join(REPO_ROOT, 'scripts', 'local-services.ts');
  const child = spawnDetached(process.execPath, ['--import', 'tsx', script], log, env);
  writeFileSync(p.pidFile, String(child.pid));
  const ok = await waitUntil(async () => {
    if (child.hasExited()) return true;
    const results = await Promise.all(p.serves.map((s) => probes[s](cfg)));
    return results.every(Boolean);
  }, 30_000);
  if (!ok || child.hasExited()) {
    throw new Error(`S3/SMTP process did not start (exit ${child.exitCode()}). Last lines of ${log}:\n${tail(log)}`);
  }
  return `pid ${child.pid}`;
}

async function terminate(pid: number, marker: string): Promise<void> {
  try {
    process.kill(pid, 'SIGTERM');
  } catch {
    return;
  }
  if (await waitUntil(() => !alive(pid, marker), 15_000)) return;
  console.warn(`  process ${pid} ignored SIGTERM for 15 s; sending SIGKILL`);
  try {
    process.kill(pid, 'SIGKILL');
  } catch {
    /* gone */
  }
  await waitUntil(() => !alive(pid, marker), 5_000);
}

// ---------- commands ----------

function ports(cfg: Config, p: Proc): string {
  return p.serves.map((s) => `${s} 127.0.0.1:${cfg.ports[s === 'mariadb' ? 'db' : s]}`).join(', ');
}

function selected(cfg: Config, only?: SingleService): Proc[] {
  const all = procs(cfg);
  if (!only) return all;
  const picked = all.filter((p) => p.serves.includes(only));
  if (!picked.length) throw new Error(`${only} is not run by this script for the ${cfg.instance} instance`);
  return picked;
}

async function start(cfg: Config, fresh: boolean, only?: SingleService): Promise<number> {
  checkPorts(cfg);
  if (fresh) {
    await stop(cfg, true);
    rmSync(cfg.dataDir, { recursive: true, force: true });
    console.log(`Wiped ${path.relative(REPO_ROOT, cfg.dataDir)}/`);
  }
  for (const d of [cfg.dataDir, cfg.runDir, cfg.logDir]) mkdirSync(d, { recursive: true });
  const starters = { mariadb: startMariadb, redis: startRedis, local: startLocal };
  let failed = 0;
  for (const p of selected(cfg, only)) {
    const t0 = Date.now();
    const pid = runningPid(p);
    try {
      if (pid) {
        console.log(`${p.label.padEnd(18)} already running (pid ${pid}; ${ports(cfg, p)})`);
      } else {
        const busy = (await Promise.all(p.serves.map(async (s) => ((await probes[s](cfg)) ? s : null)))).filter(
          Boolean,
        );
        if (busy.length) {
          throw new Error(
            `port(s) of ${busy.join(', ')} already answer but not from a process this script started; ` +
              'stop that process or choose other ports',
          );
        }
        const what = await starters[p.name](cfg, p);
        console.log(
          `${p.label.padEnd(18)} started (${what}; ${ports(cfg, p)}) in ${((Date.now() - t0) / 1000).toFixed(1)} s`,
        );
      }
      if (p.name === 'mariadb') await ensureDatabase(cfg);
    } catch (err) {
      failed++;
      console.error(`${p.label.padEnd(18)} FAILED: ${(err as Error).message}`);
    }
  }
  if (!cfg.localS3)
    console.log(`S3: using the external endpoint ${cfg.env.S3_ENDPOINT || '(AWS default)'}; no local S3 started`);
  console.log(`Data and logs of the ${cfg.instance} instance: ${path.relative(REPO_ROOT, cfg.dataDir)}/`);
  return failed ? 1 : 0;
}

async function stop(cfg: Config, quiet = false, only?: SingleService): Promise<number> {
  for (const p of [...selected(cfg, only)].reverse()) {
    const pid = runningPid(p);
    if (!pid) {
      if (!quiet) console.log(`${p.label.padEnd(18)} not running`);
      if (existsSync(p.pidFile)) unlinkSync(p.pidFile);
      continue;
    }
    const t0 = Date.now();
    if (p.name === 'mariadb') await stopMariadb(cfg, p, pid);
    else await terminate(pid, p.marker);
    const gone = !alive(pid, p.marker);
    if (gone && existsSync(p.pidFile)) unlinkSync(p.pidFile);
    console.log(
      `${p.label.padEnd(18)} ${gone ? 'stopped' : 'STILL RUNNING'} (pid ${pid}) in ${((Date.now() - t0) / 1000).toFixed(1)} s`,
    );
    if (!gone) return 1;
  }
  return 0;
}

async function status(cfg: Config): Promise<number> {
  let allUp = true;
  console.log(`Lobeline services, ${cfg.instance} instance (${path.relative(REPO_ROOT, cfg.dataDir)}/):`);
  for (const p of procs(cfg)) {
    const pid = runningPid(p);
    for (const s of p.serves) {
      const answers = await probes[s](cfg);
      const port = cfg.ports[s === 'mariadb' ? 'db' : s];
      let state: string;
      if (pid && answers) state = `running, answers (pid ${pid})`;
      else if (pid) state = `process ${pid} alive but NOT answering`;
      else if (answers) state = 'port answers, but not a process started by this script';
      else state = 'stopped';
      if (!(pid && answers)) allUp = false;
      console.log(`  ${s.padEnd(8)} 127.0.0.1:${String(port).padEnd(6)} ${state}`);
    }
  }
  return allUp ? 0 : 1;
}

async function waitAll(cfg: Config, timeoutS: number): Promise<number> {
  const services: ServiceName[] = ['mariadb', 'redis', 'smtp', ...(cfg.localS3 ? (['s3'] as const) : [])];
  const t0 = Date.now();
  const ok = await waitUntil(
    async () => (await Promise.all(services.map((s) => probes[s](cfg)))).every(Boolean),
    timeoutS * 1000,
    200,
  );
  if (ok) {
    console.log(
      `All services of ${cfg.instance} answer (${services.join(', ')}) after ${((Date.now() - t0) / 1000).toFixed(1)} s`,
    );
    return 0;
  }
  const missing: string[] = [];
  for (const s of services) if (!(await probes[s](cfg))) missing.push(s);
  console.error(
    `Not answering after ${timeoutS} s: ${missing.join(', ')}. Logs: ${path.relative(REPO_ROOT, cfg.logDir)}/`,
  );
  return 1;
}

function printEnv(cfg: Config): number {
  const keys = Object.keys(instanceDefaults(cfg.instance));
  if (cfg.instance === 'dev') keys.push('NEXTAUTH_SECRET', 'DB_PASSWORD', 'S3_ACCESS_KEY_ID', 'S3_SECRET_ACCESS_KEY');
  for (const k of keys) {
    const v = cfg.env[k];
    if (v !== undefined) console.log(`export ${k}='${v.replace(/'/g, `'\\''`)}'`);
  }
  return 0;
}

/**
 * Starts the services of an instance (or one of them) from another program, e.g. a test that manages a private
 * instance; `env` replaces the process environment (see resolveConfig). Throws when something did not start.
 */
export async function startServices(
  instance: Instance,
  options: { fresh?: boolean; only?: SingleService; env?: Record<string, string> } = {},
): Promise<void> {
  const code = await start(resolveConfig(instance, options.env), options.fresh ?? false, options.only);
  if (code !== 0) throw new Error(`services of ${instance} did not start (${options.only ?? 'all'})`);
}

/** Stops the services of an instance (or one of them); resolves once the process is gone. */
export async function stopServices(
  instance: Instance,
  options: { only?: SingleService; env?: Record<string, string> } = {},
): Promise<void> {
  const code = await stop(resolveConfig(instance, options.env), false, options.only);
  if (code !== 0) throw new Error(`services of ${instance} did not stop (${options.only ?? 'all'})`);
}

/** Whether one service of an instance answers right now. */
export async function serviceAnswers(
  instance: Instance,
  service: SingleService,
  env?: Record<string, string>,
): Promise<boolean> {
  return probes[service](resolveConfig(instance, env));
}

async function main(): Promise<number> {
  const { positionals, values } = parseArgs({
    allowPositionals: true,
    options: {
      instance: { type: 'string', default: 'dev' },
      fresh: { type: 'boolean', default: false },
      timeout: { type: 'string', default: '60' },
      only: { type: 'string' },
    },
  });
  const command = positionals[0];
  const instance = values.instance;
  if (instance !== 'dev' && instance !== 'test' && !isPrivateInstance(instance)) {
    console.error(`--instance must be dev, test or test-<name> (got "${instance}")`);
    return 2;
  }
  const only = values.only;
  if (only !== undefined && only !== 'mariadb' && only !== 'redis' && only !== 's3') {
    console.error(`--only must be mariadb, redis or s3 (got "${only}")`);
    return 2;
  }
  const cfg = resolveConfig(instance);
  switch (command) {
    case 'start':
      return start(cfg, values.fresh, only);
    case 'stop':
      return stop(cfg, false, only);
    case 'status':
      return status(cfg);
    case 'wait':
      return waitAll(cfg, Number(values.timeout) || 60);
    case 'env':
      return printEnv(cfg);
    default:
      console.error(
        'Usage: tsx scripts/services.ts start|stop|status|wait|env --instance dev|test|test-<name> [--fresh] ' +
          '[--only mariadb|redis|s3]',
      );
      return 2;
  }
}

const invokedDirectly = process.argv[1] && import.meta.url === pathToFileURL(path.resolve(process.argv[1])).href;
if (invokedDirectly) {
  main().then(
    (code) => process.exit(code),
    (err: Error) => {
      console.error(`services: ${err.message}`);
      process.exit(1);
    },
  );
}
