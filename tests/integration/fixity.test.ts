// Fixity checks (C10/C11, issue 14) against the real MariaDB, Redis, local S3 store and SMTP catcher: an object
// overwritten directly through the S3 API (bypassing Lobeline) and one removed are caught by the fixity job run
// through its queue and worker; the files are flagged, the failures audited with both hashes, and the data stewards
// get one alert e-mail naming the file, the expected and the found SHA-256. The reference hashes are node:crypto's
// SHA-256 (FIPS 180-4) of the bytes written here. The rolling plan takes the least-recently-checked files first.
import { createHash, randomBytes } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import type { World } from './helpers/world';

vi.mock('server-only', () => ({}));

const { callRoute } = await import('./helpers/call');
const { actAs, clearSession } = await import('./helpers/session');
const { makeWorld } = await import('./helpers/world');
const { closeSequelize } = await import('@/lib/db');
const { closeReductionQueue } = await import('@/lib/queue/reduction-queue');
const { FIXITY_SCHEDULER_ID, closeFixityQueue, enqueueFixityRun, getFixityQueue, scheduleFixity, startFixityWorker } =
  await import('@/lib/jobs/fixity');
const { resetEnvCache } = await import('@/lib/env');
const { fixityCandidates } = await import('@/lib/stewardship/fixity');
const { closeS3Client, deleteObject, putObject } = await import('@/lib/storage/s3');
const { waitForCaughtMessage } = await import('@/lib/mail/catcher-store');
const { AuditEvent, FixityCheck, RawFile, Scan } = await import('@/models');
const fixityRoute = await import('@/app/api/stewardship/fixity/route');

// biome-ignore lint/suspicious/noExplicitAny: JSON read back from the API, narrowed by the assertions
type Loose = any;

let w: World;
let worker: ReturnType<typeof startFixityWorker>;
beforeAll(async () => {
  w = await makeWorld();
  worker = startFixityWorker({ name: 'fixity-test-worker', schedule: false });
  await worker.worker.waitUntilReady();
});
afterAll(async () => {
  clearSession();
  await worker?.close();
  await w?.cleanup();
  await closeFixityQueue();
  await closeReductionQueue();
  closeS3Client();
  await closeSequelize();
});

const sha = (b: Uint8Array) => createHash('sha256').update(b).digest('hex');

async function storedFile(bytes: Uint8Array) {
  const scanId = await w.freshScan({ teamId: w.teamA, campaignId: w.campaignA, shiftId: w.shiftA } as Loose);
  const scan = await Scan.findByPk(scanId);
  const raw = await RawFile.findByPk(scan!.raw_file_id);
  await putObject({ bucket: raw!.bucket, key: raw!.storage_key, body: bytes, contentLength: bytes.length });
  await raw!.update({ sha256: sha(bytes), size_bytes: bytes.length });
  return {
    rawFileId: raw!.id,
    bucket: raw!.bucket,
    key: raw!.storage_key,
    sha256: sha(bytes),
    name: raw!.original_name,
  };
}

/** Runs one fixity job through the queue and the worker, and waits for it to finish. */
async function runJob(rawFileIds: number[]) {
  const id = await enqueueFixityRun({ rawFileIds });
  const deadline = Date.now() + 60_000;
  for (;;) {
    const job = await getFixityQueue().getJob(id);
    const state = await job?.getState();
    if (state === 'completed') return job!.returnvalue as Loose;
    if (state === 'failed') throw new Error(`fixity job failed: ${job?.failedReason}`);
    if (Date.now() > deadline) throw new Error(`fixity job still ${state}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

describe('the fixity job', () => {
  it('matches intact files, then catches an object overwritten through the S3 API and a removed one', async () => {
    const good = await storedFile(randomBytes(50_000));
    const tampered = await storedFile(randomBytes(50_000));
    const removed = await storedFile(randomBytes(10_000));
    const first = await runJob([good.rawFileId, tampered.rawFileId, removed.rawFileId]);
    expect(first).toMatchObject({ checked: 3, matched: 3, failed: 0 });
    for (const f of [good, tampered, removed]) {
      const row = await RawFile.findByPk(f.rawFileId);
      expect(row?.last_fixity_ok).toBe(true);
      expect(row?.fixity_flagged_at).toBeNull();
    }

    // Corrupt one object directly in the store (same length, other bytes) and remove another, bypassing Lobeline.
    const other = Buffer.from(randomBytes(50_000));
    await putObject({ bucket: tampered.bucket, key: tampered.key, body: other, contentLength: other.length });
    await deleteObject(removed.bucket, removed.key);
    const sent = Date.now();
    const second = await runJob([good.rawFileId, tampered.rawFileId, removed.rawFileId]);
    expect(second).toMatchObject({ checked: 3, matched: 1, failed: 2 });

    const t = await RawFile.findByPk(tampered.rawFileId);
    expect(t?.last_fixity_ok).toBe(false);
    expect(t?.fixity_flagged_at).not.toBeNull();
    const tCheck = await FixityCheck.findOne({ where: { raw_file_id: tampered.rawFileId }, order: [['id', 'DESC']] });
    expect(tCheck).toMatchObject({
      ok: false,
      outcome: 'mismatch',
      sha256_expected: tampered.sha256,
      sha256_found: sha(other),
    });
    const rCheck = await FixityCheck.findOne({ where: { raw_file_id: removed.rawFileId }, order: [['id', 'DESC']] });
    expect(rCheck).toMatchObject({ ok: false, outcome: 'missing', sha256_found: null });
    expect((await RawFile.findByPk(good.rawFileId))?.fixity_flagged_at).toBeNull();

    const audit = await AuditEvent.findAll({
      where: { action: 'file.fixity_failed', target_id: [String(tampered.rawFileId), String(removed.rawFileId)] },
    });
    expect(audit).toHaveLength(2);
    const ta = audit.find((a) => a.target_id === String(tampered.rawFileId))!;
    expect(ta.outcome).toBe('failed');
    expect(ta.details).toMatchObject({ sha256: tampered.sha256, found: sha(other), outcome: 'mismatch' });

    // One alert e-mail to the stewards, naming both files and both hashes of the tampered one.
    const mail = await waitForCaughtMessage(
      (m) =>
        m.to.includes(w.emails.steward) &&
        /fixity check failed/i.test(m.subject) &&
        new Date(m.date).getTime() >= sent - 1000 &&
        m.text.includes(tampered.sha256),
    );
    expect(mail.subject).toBe('Lobeline: fixity check failed for 2 stored files');
    expect(mail.text).toContain(`expected: ${tampered.sha256}`);
    expect(mail.text).toContain(`found:    ${sha(other)}`);
    expect(mail.text).toContain('MISSING');
    expect(mail.text).toContain('/stewardship/fixity');
    // Not sent to team members (the analyst has no facility role).
    expect(mail.to).not.toContain(w.emails.analyst);

    // The report lists both failures with campaign, expected and found hash.
    actAs(w.users.steward);
    const r = await callRoute(fixityRoute.GET, {
      method: 'GET',
      path: '/api/stewardship/fixity',
      query: { pageSize: 100 },
    });
    expect(r.status).toBe(200);
    const report = (r.json as Loose).report;
    const row = report.failures.rows.find((x: Loose) => x.rawFileId === tampered.rawFileId);
    expect(row).toMatchObject({
      outcome: 'mismatch',
      expected: tampered.sha256,
      found: sha(other),
      campaignId: w.campaignA,
    });
    expect(report.failures.rows.find((x: Loose) => x.rawFileId === removed.rawFileId)?.outcome).toBe('missing');
    expect(report.checkedWithinPeriod).toBeGreaterThanOrEqual(3);
    expect(report.checkedWithinPeriod).toBeLessThanOrEqual(report.total);
  });

  it('a file that matches again after a failure is unflagged, and that is audited', async () => {
    const bytes = randomBytes(20_000);
    const f = await storedFile(bytes);
    const junk = randomBytes(20_000);
    await putObject({ bucket: f.bucket, key: f.key, body: junk, contentLength: junk.length });
    await runJob([f.rawFileId]);
    expect((await RawFile.findByPk(f.rawFileId))?.fixity_flagged_at).not.toBeNull();
    await putObject({ bucket: f.bucket, key: f.key, body: bytes, contentLength: bytes.length });
    const again = await runJob([f.rawFileId]);
    expect(again).toMatchObject({ checked: 1, matched: 1, failed: 0 });
    const row = await RawFile.findByPk(f.rawFileId);
    expect(row?.fixity_flagged_at).toBeNull();
    expect(row?.last_fixity_ok).toBe(true);
    const cleared = await AuditEvent.findOne({
      where: { action: 'file.fixity_checked', target_id: String(f.rawFileId) },
    });
    expect(cleared?.details).toMatchObject({ sha256: f.sha256, outcome: 'match' });
  });

  it('the rolling plan takes never-checked files first, then the least recently checked', async () => {
    const a = await storedFile(randomBytes(100));
    const b = await storedFile(randomBytes(100));
    const c = await storedFile(randomBytes(100));
    await RawFile.update(
      { last_fixity_at: new Date('2001-01-01T00:00:00Z'), last_fixity_ok: true },
      { where: { id: a.rawFileId } },
    );
    await RawFile.update(
      { last_fixity_at: new Date('2000-01-01T00:00:00Z'), last_fixity_ok: true },
      { where: { id: b.rawFileId } },
    );
    const all = await fixityCandidates(100_000);
    const pos = (id: number) => all.indexOf(id);
    expect(pos(c.rawFileId)).toBeGreaterThanOrEqual(0);
    // c (never checked) before b (2000) before a (2001)
    expect(pos(c.rawFileId)).toBeLessThan(pos(b.rawFileId));
    expect(pos(b.rawFileId)).toBeLessThan(pos(a.rawFileId));
    // every never-checked file comes before every checked one
    const checked = new Set(
      (await RawFile.findAll({ where: { id: all }, attributes: ['id', 'last_fixity_at'] }))
        .filter((r) => r.last_fixity_at !== null)
        .map((r) => r.id),
    );
    const firstChecked = all.findIndex((id) => checked.has(id));
    expect(all.slice(firstChecked).every((id) => checked.has(id))).toBe(true);
  });

  it('a steward starts a run by hand (audited); a team member may not', async () => {
    actAs(w.users.pi);
    const refused = await callRoute(fixityRoute.POST, {
      method: 'POST',
      path: '/api/stewardship/fixity',
      body: { limit: 1 },
    });
    expect(refused.status).toBe(403);
    actAs(w.users.steward);
    const bad = await callRoute(fixityRoute.POST, {
      method: 'POST',
      path: '/api/stewardship/fixity',
      body: { limit: 0 },
    });
    expect(bad.status).toBe(400);
    const ok = await callRoute(fixityRoute.POST, {
      method: 'POST',
      path: '/api/stewardship/fixity',
      body: { limit: 1 },
    });
    expect(ok.status).toBe(202);
    const jobId = (ok.json as Loose).jobId as string;
    const audit = await AuditEvent.findOne({ where: { action: 'fixity.run_requested', target_id: jobId } });
    expect(audit?.actor_id).toBe(w.users.steward);
  });

  it('the repeatable schedule follows LOBELINE_FIXITY_EVERY, and "off" removes it', async () => {
    const before = process.env.LOBELINE_FIXITY_EVERY;
    try {
      process.env.LOBELINE_FIXITY_EVERY = '6h';
      resetEnvCache();
      expect(await scheduleFixity()).toEqual({ everyMs: 6 * 3_600_000 });
      const s = await getFixityQueue().getJobScheduler(FIXITY_SCHEDULER_ID);
      expect(Number(s?.every)).toBe(6 * 3_600_000);
      expect(s?.name).toBe('fixity-batch');
      process.env.LOBELINE_FIXITY_EVERY = 'off';
      resetEnvCache();
      expect(await scheduleFixity()).toEqual({ everyMs: 0 });
      expect(await getFixityQueue().getJobScheduler(FIXITY_SCHEDULER_ID)).toBeUndefined();
    } finally {
      if (before === undefined) delete process.env.LOBELINE_FIXITY_EVERY;
      else process.env.LOBELINE_FIXITY_EVERY = before;
      resetEnvCache();
    }
  });
});
