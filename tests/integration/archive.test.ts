// Archive and restore of stored raw files (C10, issue 14) against the real MariaDB, Redis and local S3 store: the
// copy's SHA-256 is checked before the original goes, the file is in exactly one place afterwards, a reduction of an
// archived file answers with a request for a restore, every state change is audited with the checksum, a campaign is
// archived as one job per file, and a worker SIGKILLed in the middle of a multipart copy is finished by the next one
// without loss. The reference for "intact" is node:crypto's SHA-256 of the bytes we wrote (FIPS 180-4), computed
// here independently of Lobeline's hashing. Access per role: policy-matrix.test.ts.
import { type ChildProcess, spawn } from 'node:child_process';
import { createHash, randomBytes } from 'node:crypto';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import type { World } from './helpers/world';

vi.mock('server-only', () => ({}));

// Multipart copies from 5 MiB on, so that a 20 MiB object is copied as four parts (set before the environment is read).
process.env.LOBELINE_ARCHIVE_PART_MIB = '5';
const { resetEnvCache, getEnv } = await import('@/lib/env');
resetEnvCache();

const { callRoute } = await import('./helpers/call');
const { actAs, clearSession } = await import('./helpers/session');
const { makeWorld } = await import('./helpers/world');
const { closeSequelize } = await import('@/lib/db');
const { closeReductionQueue } = await import('@/lib/queue/reduction-queue');
const { closeArchiveQueue, startArchiveWorker, getArchiveQueue } = await import('@/lib/jobs/archive');
const { runMove } = await import('@/lib/stewardship/archive');
const { buckets, closeS3Client, getObjectStream, headObject, putObject } = await import('@/lib/storage/s3');
const { AuditEvent, RawFile, Scan } = await import('@/models');
const archiveRoute = await import('@/app/api/raw-files/[id]/archive/route');
const restoreRoute = await import('@/app/api/raw-files/[id]/restore/route');
const campaignArchive = await import('@/app/api/campaigns/[campaignId]/archive/route');
const reduceRoute = await import('@/app/api/scans/[scanId]/reduce/route');
const deletionRoute = await import('@/app/api/raw-files/[id]/deletion/route');
const confirmRoute = await import('@/app/api/deletion-requests/[requestId]/confirm/route');

// biome-ignore lint/suspicious/noExplicitAny: JSON read back from the API, narrowed by the assertions
type Loose = any;

const REPO = path.resolve(import.meta.dirname, '../..');
let w: World;

beforeAll(async () => {
  w = await makeWorld();
  // Earlier runs may have left jobs of deleted rows; this file's worker only sees its own files anyway.
  await getArchiveQueue().obliterate({ force: true });
});
afterAll(async () => {
  clearSession();
  await w?.cleanup();
  await closeArchiveQueue();
  await closeReductionQueue();
  closeS3Client();
  await closeSequelize();
});

const sha = (b: Uint8Array) => createHash('sha256').update(b).digest('hex');

/** node:crypto's SHA-256 of a stored object, read in one GET (the independent reference). */
async function storedSha(bucket: string, key: string): Promise<{ sha256: string; bytes: number }> {
  const { body } = await getObjectStream(bucket, key);
  const h = createHash('sha256');
  let bytes = 0;
  for await (const chunk of body as AsyncIterable<Buffer>) {
    h.update(chunk);
    bytes += chunk.length;
  }
  return { sha256: h.digest('hex'), bytes };
}

async function isThere(bucket: string, key: string): Promise<boolean> {
  try {
    await headObject(bucket, key);
    return true;
  } catch (err) {
    if ((err as { code?: string }).code === 'not_found:storage') return false;
    throw err;
  }
}

/** A scan of team A's campaign whose raw file holds `bytes` (recorded checksum and size are those of the bytes). */
async function storedScan(
  bytes: Uint8Array,
  where: { campaignId: number; shiftId: number } = { campaignId: w.campaignA, shiftId: w.shiftA },
) {
  const scanId = await w.freshScan({ teamId: w.teamA, ...where } as Loose);
  return storeBytes(scanId, bytes);
}

/** Puts `bytes` as the stored object of a scan's raw file and records their checksum and size. */
async function storeBytes(scanId: number, bytes: Uint8Array) {
  const scan = await Scan.findByPk(scanId);
  const raw = await RawFile.findByPk(scan!.raw_file_id);
  await putObject({ bucket: raw!.bucket, key: raw!.storage_key, body: bytes, contentLength: bytes.length });
  await raw!.update({ sha256: sha(bytes), size_bytes: bytes.length });
  return { scanId, rawFileId: raw!.id, bucket: raw!.bucket, key: raw!.storage_key, sha256: sha(bytes) };
}

const post = (route: Loose, p: string, params: Record<string, string>, body: unknown = {}) =>
  callRoute(route.POST, { method: 'POST', path: p, params, body });

async function waitForState(
  rawFileId: number,
  state: string,
  timeoutMs = 60_000,
): Promise<InstanceType<typeof RawFile>> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const f = await RawFile.findByPk(rawFileId);
    if (f?.archive_state === state) return f;
    if (Date.now() > deadline)
      throw new Error(`file ${rawFileId} is ${f?.archive_state}, not ${state}, after ${timeoutMs} ms`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

async function auditOf(rawFileId: number) {
  return AuditEvent.findAll({
    where: { target_type: 'raw_file', target_id: String(rawFileId) },
    order: [['id', 'ASC']],
  });
}

describe('archive and restore with a worker in this process', () => {
  let worker: ReturnType<typeof startArchiveWorker>;
  beforeAll(() => {
    worker = startArchiveWorker({ name: 'archive-test-worker', sweep: false });
  });
  afterAll(async () => {
    await worker.close();
  });

  it('archives a file: verified copy in the archive bucket, original removed, state and class recorded, audited', async () => {
    const bytes = randomBytes(300_000);
    const f = await storedScan(bytes);
    actAs(w.users.steward);
    const r = await post(archiveRoute, `/api/raw-files/${f.rawFileId}/archive`, { id: String(f.rawFileId) });
    expect(r.status, JSON.stringify(r.json)).toBe(202);
    expect((r.json as Loose).move.state).toBe('archiving');
    const done = await waitForState(f.rawFileId, 'archived');
    expect(done.archive_bucket).toBe(buckets().archive);
    expect(done.storage_class).toBe(getEnv().LOBELINE_ARCHIVE_STORAGE_CLASS);
    expect(done.archived_at).not.toBeNull();
    // exactly one place: the archive bucket, with the same bytes
    expect(await isThere(f.bucket, f.key)).toBe(false);
    expect(await storedSha(done.archive_bucket!, done.archive_key!)).toEqual({ sha256: f.sha256, bytes: bytes.length });
    const audit = await auditOf(f.rawFileId);
    const actions = audit.map((a) => a.action);
    expect(actions).toEqual(['file.archive_requested', 'file.archived']);
    for (const a of audit) expect(a.details?.sha256).toBe(f.sha256);
    expect(audit[0]!.actor_id).toBe(w.users.steward);
    expect(audit[1]!.details?.verifiedSha256).toBe(f.sha256);

    // A reduction of the archived file asks for a restore instead of failing.
    actAs(w.users.analyst);
    const red = await post(reduceRoute, `/api/scans/${f.scanId}/reduce`, { scanId: String(f.scanId) });
    expect(red.status).toBe(409);
    expect((red.json as Loose).error.message).toMatch(/cannot be reduced until the file is restored/);

    // Archiving again is not an error and starts nothing new.
    actAs(w.users.steward);
    const again = await post(archiveRoute, `/api/raw-files/${f.rawFileId}/archive`, { id: String(f.rawFileId) });
    expect(again.status).toBe(202);
    expect((again.json as Loose).move.started).toBe(false);

    // An analyst may not restore; the team's PI may.
    actAs(w.users.analyst);
    expect(
      (await post(restoreRoute, `/api/raw-files/${f.rawFileId}/restore`, { id: String(f.rawFileId) })).status,
    ).toBe(403);
    actAs(w.users.pi);
    const rs = await post(restoreRoute, `/api/raw-files/${f.rawFileId}/restore`, { id: String(f.rawFileId) });
    expect(rs.status, JSON.stringify(rs.json)).toBe(202);
    const back = await waitForState(f.rawFileId, 'online');
    // the mark comes before the archive copy is removed: wait for the last step too
    const deadline = Date.now() + 30_000;
    while ((await RawFile.findByPk(f.rawFileId))?.archive_key !== null && Date.now() < deadline)
      await new Promise((r2) => setTimeout(r2, 100));
    expect(back.storage_class).toBe('STANDARD');
    expect(await storedSha(f.bucket, f.key)).toEqual({ sha256: f.sha256, bytes: bytes.length });
    expect(await isThere(done.archive_bucket!, done.archive_key!)).toBe(false);
    const after = (await auditOf(f.rawFileId)).map((a) => a.action);
    expect(after.slice(2)).toEqual(['file.restore_requested', 'file.restored']);
  });

  it('deleting an archived file (two people, past retention) removes the archive copy', async () => {
    const f = await storedScan(randomBytes(3000));
    await RawFile.update({ retention_until: '2020-01-01' }, { where: { id: f.rawFileId } });
    actAs(w.users.steward);
    expect(
      (await post(archiveRoute, `/api/raw-files/${f.rawFileId}/archive`, { id: String(f.rawFileId) })).status,
    ).toBe(202);
    const archived = await waitForState(f.rawFileId, 'archived');
    const asked = await post(
      deletionRoute,
      `/api/raw-files/${f.rawFileId}/deletion`,
      { id: String(f.rawFileId) },
      {
        reason: 'Test: superseded, past retention.',
      },
    );
    expect(asked.status, JSON.stringify(asked.json)).toBe(201);
    const requestId = (asked.json as Loose).request.id as number;
    actAs(w.users.pi);
    const confirmed = await post(confirmRoute, `/api/deletion-requests/${requestId}/confirm`, {
      requestId: String(requestId),
    });
    expect(confirmed.status, JSON.stringify(confirmed.json)).toBe(200);
    expect(await isThere(archived.archive_bucket!, archived.archive_key!)).toBe(false);
    expect(await isThere(f.bucket, f.key)).toBe(false);
  });

  it('a body with fields is refused (zod) and nothing changes', async () => {
    const f = await storedScan(randomBytes(1000));
    actAs(w.users.steward);
    const r = await post(
      archiveRoute,
      `/api/raw-files/${f.rawFileId}/archive`,
      { id: String(f.rawFileId) },
      { now: 1 },
    );
    expect(r.status).toBe(400);
    expect((await RawFile.findByPk(f.rawFileId))?.archive_state).toBe('online');
  });

  it('archives a whole campaign as one job per file, with progress', async () => {
    const campaignId = await w.freshReducibleCampaign({ teamId: w.teamA, ownerId: w.users.pi } as Loose);
    const first = await Scan.findOne({ where: { campaign_id: campaignId } });
    const files = [
      await storeBytes(first!.id, randomBytes(2000)),
      await storedScan(randomBytes(3000), { campaignId, shiftId: first!.shift_id }),
    ];
    actAs(w.users.steward);
    const r = await post(
      campaignArchive,
      `/api/campaigns/${campaignId}/archive`,
      { campaignId: String(campaignId) },
      {
        direction: 'archive',
      },
    );
    expect(r.status, JSON.stringify(r.json)).toBe(202);
    const total = (r.json as Loose).progress.files as number;
    expect((r.json as Loose).started).toBe(total);
    expect(total).toBe(files.length);
    for (const f of files) await waitForState(f.rawFileId, 'archived');
    const p = await callRoute(campaignArchive.GET, {
      method: 'GET',
      path: `/api/campaigns/${campaignId}/archive`,
      params: { campaignId: String(campaignId) },
    });
    expect(p.status).toBe(200);
    expect((p.json as Loose).progress.byState.archived).toBe(total);
    expect((p.json as Loose).progress.byState.online).toBe(0);
    for (const f of files) expect(await isThere(f.bucket, f.key)).toBe(false);
  });

  it('resumes after the mark: an archived file whose original is still there loses only the original', async () => {
    const bytes = randomBytes(5000);
    const f = await storedScan(bytes);
    const archiveKey = f.key;
    // State as a worker killed between step 3 (mark) and step 4 (remove) leaves it: both copies, state archived.
    await putObject({ bucket: buckets().archive, key: archiveKey, body: bytes, contentLength: bytes.length });
    await RawFile.update(
      {
        archive_state: 'archived',
        archive_bucket: buckets().archive,
        archive_key: archiveKey,
        archived_at: new Date(),
      },
      { where: { id: f.rawFileId } },
    );
    expect(await runMove(f.rawFileId, 'archive')).toBe('archived');
    expect(await isThere(f.bucket, f.key)).toBe(false);
    expect(await storedSha(buckets().archive, archiveKey)).toEqual({ sha256: f.sha256, bytes: bytes.length });
  });

  it('does not archive bytes that no longer match the checksum: the original stays and the file is flagged', async () => {
    const f = await storedScan(randomBytes(4000));
    // the stored object changed after cataloguing
    const other = randomBytes(4000);
    await putObject({ bucket: f.bucket, key: f.key, body: other, contentLength: other.length });
    actAs(w.users.steward);
    expect(
      (await post(archiveRoute, `/api/raw-files/${f.rawFileId}/archive`, { id: String(f.rawFileId) })).status,
    ).toBe(202);
    const back = await waitForState(f.rawFileId, 'online');
    expect(back.fixity_flagged_at).not.toBeNull();
    expect(await storedSha(f.bucket, f.key)).toEqual({ sha256: sha(other), bytes: other.length });
    expect(await isThere(buckets().archive, f.key)).toBe(false);
    const actions = (await auditOf(f.rawFileId)).map((a) => a.action);
    expect(actions).toEqual(['file.archive_requested', 'file.archive_failed']);
  });
});

describe('a worker killed with SIGKILL in the middle of a multipart copy', () => {
  let child: ChildProcess | null = null;
  afterAll(() => {
    if (child && child.exitCode === null) child.kill('SIGKILL');
  });

  it('is finished by the next worker: the object intact in exactly one place and the file archived', async () => {
    // The child must be the only worker of the archive queue, or another one may take the job (scripts/test.sh runs
    // the integration tests before it starts the app's worker).
    const others = await getArchiveQueue().getWorkers();
    expect(
      others.map((x) => x.name),
      'another archive worker is connected to the test Redis',
    ).toEqual([]);
    const bytes = randomBytes(20 * 1024 * 1024); // four 5 MiB parts
    const f = await storedScan(bytes);
    child = spawn(
      process.execPath,
      ['--import', 'tsx', path.join(REPO, 'tests/integration/helpers/archive-child.ts')],
      {
        cwd: REPO,
        env: { ...process.env, LOG_LEVEL: 'warn', LOBELINE_ARCHIVE_PART_MIB: '5', PAUSE_AFTER_PART: '2' },
        stdio: ['ignore', 'pipe', 'pipe'],
      },
    );
    let out = '';
    child.stdout?.on('data', (d) => (out += String(d)));
    child.stderr?.on('data', (d) => (out += String(d)));
    const waitFor = async (text: string, ms: number) => {
      const deadline = Date.now() + ms;
      while (!out.includes(text)) {
        if (child?.exitCode !== null) throw new Error(`the child worker ended:\n${out}`);
        if (Date.now() > deadline) throw new Error(`no "${text}" from the child worker:\n${out}`);
        await new Promise((r) => setTimeout(r, 50));
      }
    };
    await waitFor('READY', 60_000);
    actAs(w.users.steward);
    const r = await post(archiveRoute, `/api/raw-files/${f.rawFileId}/archive`, { id: String(f.rawFileId) });
    expect(r.status).toBe(202);
    await waitFor('PAUSED part 2 of 4', 60_000);
    child.kill('SIGKILL');
    await new Promise((r2) => child?.once('exit', r2));

    // Cut off mid-copy: still archiving, the original untouched, no archive object (the multipart upload is open).
    const cut = await RawFile.findByPk(f.rawFileId);
    expect(cut?.archive_state).toBe('archiving');
    expect(await storedSha(f.bucket, f.key)).toEqual({ sha256: f.sha256, bytes: bytes.length });
    expect(await isThere(cut!.archive_bucket!, cut!.archive_key!)).toBe(false);

    // The next worker takes the stalled job back (after the dead one's lock expires) and finishes it.
    const second = startArchiveWorker({ name: 'archive-recovery-worker', sweep: false });
    try {
      const done = await waitForState(f.rawFileId, 'archived', 120_000);
      const deadline = Date.now() + 30_000;
      while ((await isThere(f.bucket, f.key)) && Date.now() < deadline) await new Promise((r2) => setTimeout(r2, 100));
      expect(await isThere(f.bucket, f.key)).toBe(false);
      expect(await storedSha(done.archive_bucket!, done.archive_key!)).toEqual({
        sha256: f.sha256,
        bytes: bytes.length,
      });
    } finally {
      await second.close();
    }
    const actions = (await auditOf(f.rawFileId)).map((a) => a.action);
    expect(actions).toEqual(['file.archive_requested', 'file.archived']);
  }, 240_000);
});
