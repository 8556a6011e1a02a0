// The raw frame of the calibration bench (GET /api/scans/[id]/raw-frame): the counts are the stored file's, read
// the way the reduction job reads them (compared with the reader on a download of the same object), repeated
// requests for the steps of one scan reuse the opened file, and a step the scan does not have is refused with a
// sentence.
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';

vi.mock('server-only', () => ({}));

const route = await import('@/app/api/scans/[scanId]/raw-frame/route');
const { decodeFrame } = await import('@/components/bench/wire');
const { closeSequelize } = await import('@/lib/db');
const { downloadVerified } = await import('@/lib/ingest/verify');
const { closeReductionQueue } = await import('@/lib/queue/reduction-queue');
const { closeS3Client } = await import('@/lib/storage/s3');
const models = await import('@/models');
const { openScanPath } = await import('@/reduction/hdf5/node');
const { callRoute } = await import('./helpers/call');
const { actAs, clearSession } = await import('./helpers/session');
const { makeWorld } = await import('./helpers/world');

type World = Awaited<ReturnType<typeof makeWorld>>;
let world: World;
const dir = mkdtempSync(path.join(tmpdir(), 'lobeline-bench-frame-test-'));

beforeAll(async () => {
  world = await makeWorld({ data: true });
});

afterAll(async () => {
  clearSession();
  await world?.cleanup();
  await closeReductionQueue();
  closeS3Client();
  await closeSequelize();
  rmSync(dir, { recursive: true, force: true });
});

const get = (scanId: number, step: number) =>
  callRoute(route.GET, {
    method: 'GET',
    path: `/api/scans/${scanId}/raw-frame`,
    params: { scanId: String(scanId) },
    query: { step },
  });

describe('raw frame of the bench', () => {
  it('every step equals the reader on the stored object, bit for bit, twice in a row', async () => {
    const t = world.a;
    actAs(world.users.analyst);
    const scan = await models.Scan.findByPk(t.scanId);
    const file = await models.RawFile.findByPk(scan!.raw_file_id);
    const local = path.join(dir, 'raw.h5');
    await downloadVerified(file!.bucket, file!.storage_key, local, {
      sha256: file!.sha256,
      sizeBytes: Number(file!.size_bytes),
    });
    const opened = await openScanPath(local);
    if (!opened.ok) throw new Error('reference file did not open');
    const nStep = opened.scan.meta.shape.nStep;
    for (const round of [1, 2]) {
      for (let k = 0; k < nStep; k++) {
        const r = await get(t.scanId, k);
        expect(r.status, `round ${round} step ${k}: ${JSON.stringify(r.json).slice(0, 200)}`).toBe(200);
        const f = decodeFrame(r.json as never);
        expect(Buffer.from(f.counts.buffer).equals(Buffer.from(opened.scan.readFrame(k).buffer))).toBe(true);
        const bg = opened.scan.readBackground(k);
        expect(f.background === null).toBe(bg === null);
        if (bg && f.background) expect(Buffer.from(f.background.buffer).equals(Buffer.from(bg.buffer))).toBe(true);
      }
    }
    opened.scan.close();
    const r = await get(t.scanId, nStep);
    expect(r.status).toBe(409);
    expect(JSON.stringify(r.json)).toContain(`step ${nStep} does not exist`);
  });
});
