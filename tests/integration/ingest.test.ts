// End-of-shift ingest (C2) through the real S3 service (@20minutes/s3rver, which checks SigV4) and MariaDB that
// scripts/test.sh starts. Route handlers are called in-process; the signed-in user comes from the session test
// hook of lib/auth/session-source.ts. Checksums are compared with node:crypto (OpenSSL's SHA-256, FIPS 180-4).
import { createHash, randomBytes, randomInt } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';

vi.mock('server-only', () => ({}));

const { POST: startPOST } = await import('@/app/api/uploads/route');
const parts = await import('@/app/api/uploads/[uploadId]/parts/route');
const { POST: completePOST } = await import('@/app/api/uploads/[uploadId]/complete/route');
const { POST: abortPOST } = await import('@/app/api/uploads/[uploadId]/abort/route');
const { GET: shiftGET } = await import('@/app/api/shifts/[shiftId]/route');
const { POST: closePOST } = await import('@/app/api/shifts/[shiftId]/close/route');
const { POST: logPOST } = await import('@/app/api/shifts/[shiftId]/log/route');
const { POST: releasePOST } = await import('@/app/api/raw-files/[id]/release/route');
const { setSessionSourceForTests } = await import('@/lib/auth/session-source');
const { getDb, closeSequelize } = await import('@/lib/db');
const { getEnv } = await import('@/lib/env');
const { waitForCaughtMessage } = await import('@/lib/mail/catcher-store');
const { closeMailTransport } = await import('@/lib/mail/transport');
const s3 = await import('@/lib/storage/s3');
const models = await import('@/models');
const { makeExample } = await import('@/scripts/make-example');
const { BROKEN_KINDS } = await import('@/reduction/synth/scan-file');
const { partRange } = await import('@/lib/ingest/plan');
const { Sha256 } = await import('@/lib/ingest/sha256');

// FIXTURES //

const run = randomBytes(3).toString('hex');
const dir = mkdtempSync(path.join(tmpdir(), 'lobeline-ingest-test-'));
const ids = { teamA: 0, teamB: 0, opA: 0, anA: 0, opB: 0, campaignA: 0, shiftA: 0, shiftA2: 0, shiftB: 0 };
const emails = { opA: `op-${run}@a.example`, anA: `an-${run}@a.example`, opB: `op-${run}@b.example` };

function as(userId: number | null): void {
  setSessionSourceForTests(async () => (userId === null ? null : { userId }));
}

type Handler = (req: Request, ctx?: { params: Promise<Record<string, string>> }) => Promise<Response>;

async function call(
  handler: Handler,
  opts: { url?: string; method?: string; body?: unknown; params?: Record<string, string | number> } = {},
) {
  const params = Object.fromEntries(Object.entries(opts.params ?? {}).map(([k, v]) => [k, String(v)]));
  const req = new Request(`http://127.0.0.1:3100${opts.url ?? '/api/x'}`, {
    method: opts.method ?? 'POST',
    headers: { 'content-type': 'application/json' },
    body: opts.body === undefined ? undefined : JSON.stringify(opts.body),
  });
  const res = await handler(req, { params: Promise.resolve(params) });
  // biome-ignore lint/suspicious/noExplicitAny: test helper reads arbitrary JSON answers
  const json = (await res.json()) as any;
  return { status: res.status, json };
}

const sha = (b: Uint8Array) => createHash('sha256').update(b).digest('hex');

let seedCounter = randomInt(1, 1_000_000);
async function example(name: string, extra: string[] = []): Promise<Uint8Array> {
  const out = path.join(dir, `${name}.h5`);
  await makeExample([
    '--kind',
    'angular_streaking',
    '--out',
    out,
    '--steps',
    '2',
    '--size',
    '64',
    '--seed',
    String(seedCounter++),
    ...extra,
  ]);
  return new Uint8Array(readFileSync(out));
}

async function putTo(url: string, body: Uint8Array): Promise<Response> {
  return fetch(url, { method: 'PUT', body: Buffer.from(body) });
}

/** Start → PUT/parts → complete, as the browser does. */
async function uploadWhole(shiftId: number, fileName: string, bytes: Uint8Array, lastModifiedMs = 1_700_000_000_000) {
  const start = await call(startPOST, { body: { shiftId, fileName, sizeBytes: bytes.length, lastModifiedMs } });
  expect(start.status, JSON.stringify(start.json)).toBeLessThan(300);
  const t = start.json;
  if (t.mode === 'single') {
    const put = await putTo(t.url, bytes);
    expect(put.status).toBe(200);
  } else {
    const want = Array.from({ length: t.partCount }, (_, i) => i + 1);
    const urls = await call(parts.POST, { params: { uploadId: t.uploadId }, body: { partNumbers: want } });
    for (const p of urls.json.parts) {
      const r = partRange(bytes.length, t.partSize, p.partNumber);
      expect((await putTo(p.url, bytes.subarray(r.start, r.end))).status).toBe(200);
    }
  }
  return call(completePOST, { params: { uploadId: t.uploadId }, body: { sha256: sha(bytes) } });
}

async function storedSha(rawFileId: number): Promise<string> {
  const raw = await models.RawFile.findByPk(rawFileId);
  const { body } = await s3.getObjectStream(raw!.bucket, raw!.storage_key);
  const h = createHash('sha256');
  for await (const c of body as AsyncIterable<Buffer>) h.update(c);
  return h.digest('hex');
}

beforeAll(async () => {
  getDb();
  const [a, b] = await Promise.all([
    models.Team.create({ slug: `ta-${run}`, name: `Team A ${run}`, description: null }),
    models.Team.create({ slug: `tb-${run}`, name: `Team B ${run}`, description: null }),
  ]);
  ids.teamA = a.id;
  ids.teamB = b.id;
  const mk = (email: string) =>
    models.User.create({
      email,
      name: email.split('@')[0]!,
      password_hash: null,
      notification_prefs: null,
      last_sign_in_at: null,
    });
  const [opA, anA, opB] = await Promise.all([mk(emails.opA), mk(emails.anA), mk(emails.opB)]);
  ids.opA = opA.id;
  ids.anA = anA.id;
  ids.opB = opB.id;
  await models.Membership.bulkCreate([
    { user_id: opA.id, team_id: a.id, role: 'operator' },
    { user_id: anA.id, team_id: a.id, role: 'analyst' },
    { user_id: opB.id, team_id: b.id, role: 'operator' },
  ]);
  const campaign = (team: number) =>
    models.Campaign.create({
      team_id: team,
      name: `He 800 nm ${run}`,
      target: 'He',
      wavelength_nm: 800,
      experiment_kind: 'angular_streaking',
      description: null,
      created_by: null,
      current_calibration_id: null,
      current_settings_id: null,
      embargo_until: null,
    });
  const [ca, cb] = await Promise.all([campaign(a.id), campaign(b.id)]);
  ids.campaignA = ca.id;
  const shift = (team: number, c: number, title: string) =>
    models.Shift.create({
      team_id: team,
      campaign_id: c,
      title,
      opened_by: null,
      opened_at: new Date(),
      closed_by: null,
      closed_at: null,
      receipt_sent_at: null,
    });
  ids.shiftA = (await shift(a.id, ca.id, `Night shift ${run}`)).id;
  ids.shiftA2 = (await shift(a.id, ca.id, `Closing shift ${run}`)).id;
  ids.shiftB = (await shift(b.id, cb.id, `Other team ${run}`)).id;
});

afterAll(async () => {
  setSessionSourceForTests(null);
  rmSync(dir, { recursive: true, force: true });
  s3.closeS3Client();
  closeMailTransport();
  await closeSequelize();
});

// TESTS //

describe('uploads through presigned URLs', () => {
  it('stores a small file with one PUT, verifies its SHA-256 server-side and accepts it', async () => {
    as(ids.opA);
    const bytes = await example('single');
    const done = await uploadWhole(ids.shiftA, 'single.h5', bytes);
    expect(done.status, JSON.stringify(done.json)).toBe(200);
    expect(done.json.outcome).toBe('accepted');
    expect(done.json.sha256).toBe(sha(bytes));
    const raw = await models.RawFile.findByPk(done.json.rawFileId);
    expect(raw?.status).toBe('accepted');
    expect(raw?.storage_key).toMatch(new RegExp(`^raw/ta-${run}/${ids.shiftA}/[0-9a-f-]{36}\\.h5$`));
    expect(raw?.storage_key).not.toContain('single');
    expect(Number(raw?.size_bytes)).toBe(bytes.length);
    const scan = await models.Scan.findByPk(done.json.scanId);
    expect(scan?.raw_file_id).toBe(raw?.id);
    expect(['uploaded', 'queued']).toContain(scan?.status);
    expect(scan?.n_steps).toBe(2);
    expect(await storedSha(done.json.rawFileId)).toBe(sha(bytes));
  });

  it('uploads a large file in parts, survives a "reload" half-way (ListParts) and accepts it', async () => {
    as(ids.opA);
    // 1024² float32 × 5 steps, uncompressed ≈ 20 MiB > 16 MiB → multipart with 8 MiB parts (3 parts)
    const bytes = await example('large', [
      '--size',
      '1024',
      '--steps',
      '5',
      '--compression',
      'none',
      '--dtype',
      'float32',
    ]);
    expect(bytes.length).toBeGreaterThan(16 * 1024 * 1024);
    const body = {
      shiftId: ids.shiftA,
      fileName: 'large.h5',
      sizeBytes: bytes.length,
      lastModifiedMs: 1_700_000_000_123,
    };
    const first = await call(startPOST, { body });
    expect(first.status).toBe(201);
    expect(first.json).toMatchObject({ mode: 'multipart', partSize: 8 * 1024 * 1024, resumed: false });
    const partCount = first.json.partCount as number;
    expect(partCount).toBe(Math.ceil(bytes.length / (8 * 1024 * 1024)));
    // send part 1 only, then "reload": the same file dropped again finds the upload and the part already stored
    const u1 = await call(parts.POST, { params: { uploadId: first.json.uploadId }, body: { partNumbers: [1] } });
    const r1 = partRange(bytes.length, first.json.partSize, 1);
    expect((await putTo(u1.json.parts[0].url, bytes.subarray(r1.start, r1.end))).status).toBe(200);

    const again = await call(startPOST, { body });
    expect(again.status).toBe(200);
    expect(again.json.uploadId).toBe(first.json.uploadId);
    expect(again.json.resumed).toBe(true);
    expect(again.json.partsDone).toEqual([{ partNumber: 1, size: r1.length }]);

    // completing too early names the missing parts and keeps the upload open
    const early = await call(completePOST, { params: { uploadId: first.json.uploadId }, body: {} });
    expect(early.status).toBe(409);
    expect(early.json.error.details[0]).toContain('missing parts: 2');

    const rest = Array.from({ length: partCount - 1 }, (_, i) => i + 2);
    const urls = await call(parts.POST, { params: { uploadId: first.json.uploadId }, body: { partNumbers: rest } });
    for (const p of urls.json.parts) {
      const r = partRange(bytes.length, first.json.partSize, p.partNumber);
      expect(p.size).toBe(r.length);
      expect((await putTo(p.url, bytes.subarray(r.start, r.end))).status).toBe(200);
    }
    // the browser's incremental SHA-256 over the same chunks equals node:crypto's
    const h = new Sha256();
    for (let i = 0; i < bytes.length; i += 5_000_000) h.update(bytes.subarray(i, i + 5_000_000));
    const done = await call(completePOST, { params: { uploadId: first.json.uploadId }, body: { sha256: h.hex() } });
    expect(done.status, JSON.stringify(done.json)).toBe(200);
    expect(done.json.outcome).toBe('accepted');
    expect(await storedSha(done.json.rawFileId)).toBe(sha(bytes));
  });

  it('refuses a tampered presigned URL and an expired one at the S3 service (SigV4)', async () => {
    as(ids.opA);
    const bytes = await example('tamper');
    const start = await call(startPOST, {
      body: { shiftId: ids.shiftA, fileName: 'tamper.h5', sizeBytes: bytes.length, lastModifiedMs: 5 },
    });
    const url = new URL(start.json.url as string);
    // another key with the same signature
    const otherKey = new URL(url);
    otherKey.pathname = otherKey.pathname.replace(/[0-9a-f-]{36}\.h5$/, '00000000-0000-4000-8000-000000000000.h5');
    expect((await putTo(otherKey.toString(), bytes)).status).toBe(403);
    // a changed signature
    const sig = url.searchParams.get('X-Amz-Signature')!;
    const badSig = new URL(url);
    badSig.searchParams.set('X-Amz-Signature', `${sig.slice(0, -1)}${sig.endsWith('0') ? '1' : '0'}`);
    expect((await putTo(badSig.toString(), bytes)).status).toBe(403);
    // a longer validity than signed
    const longer = new URL(url);
    longer.searchParams.set('X-Amz-Expires', '604800');
    expect((await putTo(longer.toString(), bytes)).status).toBe(403);
    // a body of another length than the signed Content-Length
    expect((await putTo(url.toString(), bytes.subarray(0, bytes.length - 1))).status).toBeGreaterThanOrEqual(400);
    // expired: the same key signed for 1 s
    const raw = await models.Upload.findByPk(start.json.uploadId);
    const short = await s3.presignPut({
      bucket: raw!.bucket,
      key: raw!.object_key,
      contentLength: bytes.length,
      expiresIn: 1,
    });
    await new Promise((r) => setTimeout(r, 2100));
    expect((await putTo(short, bytes)).status).toBe(403);
    // nothing arrived: completing says so and keeps the upload open
    const c = await call(completePOST, { params: { uploadId: start.json.uploadId }, body: {} });
    expect(c.status).toBe(409);
    // the untouched URL still works
    expect((await putTo(url.toString(), bytes)).status).toBe(200);
    expect((await call(completePOST, { params: { uploadId: start.json.uploadId }, body: {} })).json.outcome).toBe(
      'accepted',
    );
  });

  it("never signs another team's upload or a key chosen by the client", async () => {
    as(ids.opA);
    const bytes = await example('mine');
    const start = await call(startPOST, {
      body: { shiftId: ids.shiftA, fileName: 'mine.h5', sizeBytes: bytes.length, lastModifiedMs: 7 },
    });
    as(ids.opB);
    // Another team's upload looks like a missing one (lib/policy.ts authorizeObject), and is refused all the same.
    const p = await call(parts.POST, { params: { uploadId: start.json.uploadId }, body: { partNumbers: [1] } });
    expect(p.status).toBe(404);
    const c = await call(completePOST, { params: { uploadId: start.json.uploadId }, body: {} });
    expect(c.status).toBe(404);
    const a = await call(abortPOST, { params: { uploadId: start.json.uploadId } });
    expect(a.status).toBe(404);
    // a shift of another team is not even visible
    const s = await call(startPOST, {
      body: { shiftId: ids.shiftA, fileName: 'x.h5', sizeBytes: 10, lastModifiedMs: 1 },
    });
    expect(s.status).toBe(404);
    // the refusals are in the audit trail
    const refused = await models.AuditEvent.count({ where: { action: 'auth.access_refused', actor_id: ids.opB } });
    expect(refused).toBeGreaterThanOrEqual(3);
    // an object key from the client is not part of the API
    const k = await call(startPOST, {
      body: {
        shiftId: ids.shiftB,
        fileName: 'x.h5',
        sizeBytes: 10,
        lastModifiedMs: 1,
        objectKey: `raw/ta-${run}/${ids.shiftA}/x.h5`,
      },
    });
    expect(k.status).toBe(400);
    expect(k.json.error.details.join(' ')).toMatch(/objectKey/);
    as(null);
    expect(
      (await call(startPOST, { body: { shiftId: ids.shiftA, fileName: 'x.h5', sizeBytes: 1, lastModifiedMs: 1 } }))
        .status,
    ).toBe(401);
  });

  it('refuses a stored object whose size differs from the declared one, and an empty file', async () => {
    as(ids.opA);
    const bytes = await example('size');
    const start = await call(startPOST, {
      body: { shiftId: ids.shiftA, fileName: 'size.h5', sizeBytes: bytes.length + 100, lastModifiedMs: 9 },
    });
    // bypass the presigned URL (as a misbehaving client could with its own credentials) to store other bytes
    const row = await models.Upload.findByPk(start.json.uploadId);
    await s3.putObject({ bucket: row!.bucket, key: row!.object_key, body: bytes });
    const c = await call(completePOST, { params: { uploadId: start.json.uploadId }, body: {} });
    expect(c.status).toBe(400);
    expect(c.json.error.details[0]).toContain(`has ${bytes.length} bytes but the file has ${bytes.length + 100}`);
    expect((await models.Upload.findByPk(start.json.uploadId))?.status).toBe('failed');
    const empty = await call(startPOST, {
      body: { shiftId: ids.shiftA, fileName: 'empty.h5', sizeBytes: 0, lastModifiedMs: 9 },
    });
    expect(empty.status).toBe(400);
    expect(empty.json.error.details[0]).toMatch(/sizeBytes/);
  });

  it('refuses an object whose SHA-256 differs from the browser’s', async () => {
    as(ids.opA);
    const bytes = await example('hash');
    const start = await call(startPOST, {
      body: { shiftId: ids.shiftA, fileName: 'hash.h5', sizeBytes: bytes.length, lastModifiedMs: 11 },
    });
    expect((await putTo(start.json.url, bytes)).status).toBe(200);
    const c = await call(completePOST, { params: { uploadId: start.json.uploadId }, body: { sha256: '0'.repeat(64) } });
    expect(c.status).toBe(400);
    expect(c.json.error.details[0]).toContain(sha(bytes));
  });

  it('links a duplicate by checksum instead of storing it twice', async () => {
    as(ids.opA);
    const bytes = await example('dup');
    const first = await uploadWhole(ids.shiftA, 'dup.h5', bytes, 21);
    expect(first.json.outcome).toBe('accepted');
    const second = await uploadWhole(ids.shiftA, 'dup-again.h5', bytes, 22);
    expect(second.status).toBe(200);
    expect(second.json.outcome).toBe('duplicate');
    expect(second.json.rawFileId).toBe(first.json.rawFileId);
    expect(second.json.scanId).not.toBe(first.json.scanId);
    expect(await models.RawFile.count({ where: { sha256: sha(bytes) } })).toBe(1);
    const up = await models.Upload.findOne({ where: { file_name: 'dup-again.h5', shift_id: ids.shiftA } });
    await expect(s3.headObject(up!.bucket, up!.object_key)).rejects.toMatchObject({ code: 'not_found:storage' });
    expect(
      await models.AuditEvent.count({
        where: { action: 'file.duplicate_linked', target_id: String(first.json.rawFileId) },
      }),
    ).toBe(1);
    const view = await call(shiftGET, { method: 'GET', params: { shiftId: ids.shiftA } });
    const linked = view.json.files.find((f: { scanId: number }) => f.scanId === second.json.scanId);
    expect(linked).toMatchObject({ fileName: 'dup-again.h5', duplicateLinked: true });
  });

  it('cancels an unfinished multipart upload', async () => {
    as(ids.opA);
    const start = await call(startPOST, {
      body: { shiftId: ids.shiftA, fileName: 'cancel.h5', sizeBytes: 40 * 1024 * 1024, lastModifiedMs: 3 },
    });
    expect(start.json.mode).toBe('multipart');
    const a = await call(abortPOST, { params: { uploadId: start.json.uploadId } });
    expect(a.json.status).toBe('aborted');
    const row = await models.Upload.findByPk(start.json.uploadId);
    await expect(
      s3.listParts({ bucket: row!.bucket, key: row!.object_key, uploadId: row!.multipart_upload_id! }),
    ).rejects.toMatchObject({
      code: 'not_found:storage',
    });
  });
});

// What the reader must say about each broken kind (a word of its sentence); the file stays byte-identical.
const EXPECTED_WORD: Record<string, RegExp> = {
  not_hdf5: /HDF5/i,
  truncated: /truncat|end of file|shorter|eof/i,
  missing_wavelength: /\/entry\/instrument\/source\/wavelength/,
  missing_entry_class: /NX_class/,
  wrong_counts_rank: /\/entry\/data\/counts/,
  absurd_dimensions: /\/entry\/data\/counts/,
  nan_counts: /finite|NaN/i,
  negative_counts: /negative/i,
  bad_helicity: /helicity/,
  unknown_step_quantity: /quantity/,
  wrong_step_units: /units/,
  bad_ellipticity: /ellipticity/,
  bad_start_time: /start_time/,
  background_shape_mismatch: /background/,
  lz4_compressed: /LZ4|filter|compress/i,
};

describe('broken files end quarantined with their reason and their bytes intact', () => {
  const results = new Map<string, { rawFileId: number; scanId: number; reasons: string[] }>();

  for (const kind of BROKEN_KINDS) {
    it(kind, async () => {
      as(ids.opA);
      let bytes = await example(`broken-${kind}`, ['--broken', kind]);
      // the not-HDF5 variant has the same bytes for every seed: make it unique to this run (else it is a duplicate)
      if (kind === 'not_hdf5') bytes = new Uint8Array(Buffer.concat([bytes, randomBytes(16)]));
      const done = await uploadWhole(ids.shiftA, `broken-${kind}.h5`, bytes, 100 + BROKEN_KINDS.indexOf(kind));
      expect(done.status, JSON.stringify(done.json)).toBe(200);
      if (kind === 'background_shape_mismatch') {
        // FORMATS §1: the background is optional content; a wrong one is ignored with a warning, the file is accepted
        expect(done.json.outcome).toBe('accepted');
        expect(await storedSha(done.json.rawFileId)).toBe(sha(bytes));
        return;
      }
      if (kind === 'lz4_compressed' && done.json.outcome === 'accepted') {
        // The server's reader has the LZ4 plugin (h5wasm-plugins) and decodes the file: not broken here.
        expect(await storedSha(done.json.rawFileId)).toBe(sha(bytes));
        return;
      }
      expect(done.json.outcome).toBe('quarantined');
      expect(done.json.reasons.length).toBeGreaterThan(0);
      expect(done.json.reasons.join('\n')).toMatch(EXPECTED_WORD[kind]!);
      const raw = await models.RawFile.findByPk(done.json.rawFileId);
      expect(raw?.status).toBe('quarantined');
      expect(raw?.quarantine_reasons).toEqual(done.json.reasons);
      expect((await models.Scan.findByPk(done.json.scanId))?.status).toBe('quarantined');
      expect(await storedSha(done.json.rawFileId)).toBe(sha(bytes));
      results.set(kind, done.json);
    });
  }

  it('an operator may not release; an analyst releases with corrected metadata after re-validation', async () => {
    const q = results.get('missing_wavelength');
    expect(q).toBeDefined();
    as(ids.opA);
    const refused = await call(releasePOST, {
      params: { id: q!.rawFileId },
      body: { mode: 'revalidate', metadataOverride: { wavelengthNm: 800 } },
    });
    expect(refused.status).toBe(403);
    as(ids.anA);
    const wrongFix = await call(releasePOST, {
      params: { id: q!.rawFileId },
      body: { mode: 'revalidate', metadataOverride: { ionizationEnergyEv: 24.587 } },
    });
    expect(wrongFix.status).toBe(400);
    expect(wrongFix.json.error.details.join('\n')).toMatch(/wavelength/);
    const ok = await call(releasePOST, {
      params: { id: q!.rawFileId },
      body: { mode: 'revalidate', metadataOverride: { wavelengthNm: 800 } },
    });
    expect(ok.status, JSON.stringify(ok.json)).toBe(200);
    const raw = await models.RawFile.findByPk(q!.rawFileId);
    expect(raw?.status).toBe('released');
    expect(raw?.metadata?.wavelengthNm).toBe(800);
    expect(raw?.metadata_override).toEqual({ wavelengthNm: 800 });
    expect(['uploaded', 'queued']).toContain((await models.Scan.findByPk(q!.scanId))?.status);
    expect(await storedSha(q!.rawFileId)).toBe(raw!.sha256);
  });

  it('an analyst accepts a file as it is with a recorded reason', async () => {
    const q = results.get('bad_start_time');
    as(ids.anA);
    const short = await call(releasePOST, { params: { id: q!.rawFileId }, body: { mode: 'accept', reason: 'ok' } });
    expect(short.status).toBe(400);
    const ok = await call(releasePOST, {
      params: { id: q!.rawFileId },
      body: { mode: 'accept', reason: 'Start time was written by hand; the run sheet gives 09:30 local time.' },
    });
    expect(ok.status).toBe(200);
    const ev = await models.AuditEvent.findOne({ where: { action: 'file.released', target_id: String(q!.rawFileId) } });
    expect((ev?.details as { note?: string })?.note).toContain('run sheet');
  });

  it('a corrected upload replaces a quarantined file', async () => {
    const q = results.get('bad_ellipticity');
    as(ids.opA);
    const bytes = await example('replacement');
    const start = await call(startPOST, {
      body: {
        shiftId: ids.shiftA,
        fileName: 'replacement.h5',
        sizeBytes: bytes.length,
        lastModifiedMs: 77,
        replacesRawFileId: q!.rawFileId,
      },
    });
    expect((await putTo(start.json.url, bytes)).status).toBe(200);
    const done = await call(completePOST, { params: { uploadId: start.json.uploadId }, body: { sha256: sha(bytes) } });
    expect(done.json.outcome).toBe('accepted');
    const old = await models.RawFile.findByPk(q!.rawFileId);
    expect(old?.status).toBe('replaced');
    expect(old?.replaced_by_id).toBe(done.json.rawFileId);
  });
});

describe('shift log and end of shift', () => {
  it('keeps structured log entries and refuses impossible values', async () => {
    as(ids.opA);
    const ok = await call(logPOST, {
      params: { shiftId: ids.shiftA2 },
      body: {
        text: 'Beam realigned after the iris change.',
        target: 'He',
        wavelengthNm: 800,
        pulseEnergyUj: 150,
        ellipticity: 0.87,
        detectorVoltages: { mcpFrontV: -1800, mcpBackV: 0, phosphorV: 4500, repellerV: -5000 },
      },
    });
    expect(ok.status).toBe(201);
    expect(ok.json.entry.detectorVoltages).toEqual({
      mcpFrontV: -1800,
      mcpBackV: 0,
      phosphorV: 4500,
      repellerV: -5000,
    });
    const bad = await call(logPOST, { params: { shiftId: ids.shiftA2 }, body: { text: 'x', ellipticity: 1.5 } });
    expect(bad.status).toBe(400);
    expect(bad.json.error.details[0]).toMatch(/^ellipticity:/);
  });

  it('closes the shift, e-mails the receipt to the operator and the analysts, then refuses uploads', async () => {
    as(ids.opA);
    const good = await example('close-good');
    const broken = await example('close-broken', ['--broken', 'missing_wavelength']);
    const g = await uploadWhole(ids.shiftA2, 'close-good.h5', good, 1);
    const b = await uploadWhole(ids.shiftA2, 'close-broken.h5', broken, 2);
    expect([g.json.outcome, b.json.outcome]).toEqual(['accepted', 'quarantined']);
    // an unfinished upload blocks the close unless it is abandoned on purpose
    await call(startPOST, {
      body: { shiftId: ids.shiftA2, fileName: 'never.h5', sizeBytes: 30 * 1024 * 1024, lastModifiedMs: 3 },
    });
    const blocked = await call(closePOST, { params: { shiftId: ids.shiftA2 }, body: {} });
    expect(blocked.status).toBe(409);
    expect(blocked.json.error.details).toEqual(['never.h5: not finished']);
    const closed = await call(closePOST, { params: { shiftId: ids.shiftA2 }, body: { abandonUnfinished: true } });
    expect(closed.status, JSON.stringify(closed.json)).toBe(200);
    expect(closed.json.mailed).toBe(true);
    expect(closed.json.receipt.totals).toMatchObject({ files: 2, accepted: 1, quarantined: 1 });
    expect(closed.json.receipt.abandoned).toEqual([{ fileName: 'never.h5', sizeBytes: 30 * 1024 * 1024 }]);

    const mail = await waitForCaughtMessage(
      (m) => m.to.includes(emails.opA) && m.subject.includes(`Closing shift ${run}`),
      {
        dir: getEnv().MAIL_CATCHER_DIR,
      },
    );
    expect(mail.to).toEqual(expect.arrayContaining([emails.opA, emails.anA]));
    expect(mail.to).not.toContain(emails.opB);
    for (const text of [mail.text, mail.html]) {
      expect(text).toContain('close-good.h5');
      expect(text).toContain(sha(good));
      expect(text).toContain(sha(broken));
      expect(text).toContain('/entry/instrument/source/wavelength');
      expect(text).toContain(`/scans/${g.json.scanId}`);
    }
    expect(mail.text).toContain(`size ${good.length} bytes`);
    expect(mail.text).toContain('QUARANTINED');

    const after = await call(startPOST, {
      body: { shiftId: ids.shiftA2, fileName: 'late.h5', sizeBytes: 100, lastModifiedMs: 1 },
    });
    expect(after.status).toBe(409);
    expect(after.json.error.message).toMatch(/closed/);
    const late = await call(logPOST, { params: { shiftId: ids.shiftA2 }, body: { text: 'late note' } });
    expect(late.status).toBe(409);
    const view = await call(shiftGET, { method: 'GET', params: { shiftId: ids.shiftA2 } });
    expect(view.json.shift.status).toBe('closed');
    expect(view.json.shift.receiptSentAt).not.toBeNull();
    expect(view.json.permissions).toMatchObject({ upload: false, close: false, log: false });
  });
});
