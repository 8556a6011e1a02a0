// The result-file download (issue: it landed on the storage service's XML page "SignatureDoesNotMatch").
// Through the real local S3 service of scripts/test.sh, which checks SigV4 signatures. Checks: the route's redirect
// fetched as a browser would fetch it answers the file; the file starts with the HDF5 format signature
// (\x89HDF\r\n\x1a\n, HDF5 File Format Specification, "Format Signature"); its /entry/result/summary (FORMATS §5)
// is the result JSON the API serves; a missing object sends a browser back to Lobeline's scan page with a sentence
// and an API client gets a JSON error, never the storage service's own page.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';

vi.mock('server-only', () => ({}));

const h5Route = await import('@/app/api/scans/[scanId]/download/h5/route');
const resultRoute = await import('@/app/api/scans/[scanId]/result/route');
const { closeSequelize } = await import('@/lib/db');
const { closeReductionQueue } = await import('@/lib/queue/reduction-queue');
const { closeS3Client, copyObject, deleteObject } = await import('@/lib/storage/s3');
const models = await import('@/models');
const { loadH5wasmNode } = await import('@/reduction/hdf5/node');
const { callRoute } = await import('./helpers/call');
const { actAs, clearSession } = await import('./helpers/session');
const { makeWorld } = await import('./helpers/world');

type World = Awaited<ReturnType<typeof makeWorld>>;
let world: World;
const work = mkdtempSync(path.join(tmpdir(), 'lobeline-download-test-'));
const HDF5_SIGNATURE = [0x89, 0x48, 0x44, 0x46, 0x0d, 0x0a, 0x1a, 0x0a];
/** What a browser sends when it follows a link to a file. */
const BROWSER = {
  accept: 'text/html,application/xhtml+xml,application/xml;q=0.9,*/*;q=0.8',
  'user-agent': 'Mozilla/5.0',
};

beforeAll(async () => {
  world = await makeWorld({ data: true });
});

afterAll(async () => {
  clearSession();
  await world?.cleanup();
  await closeReductionQueue();
  closeS3Client();
  await closeSequelize();
  rmSync(work, { recursive: true, force: true });
});

async function download(scanId: number, headers: Record<string, string> = BROWSER) {
  const url = new URL(`http://127.0.0.1:3100/api/scans/${scanId}/download/h5`);
  const res = await h5Route.GET(new Request(url, { headers }), { params: Promise.resolve({ scanId: String(scanId) }) });
  return res;
}

describe('result file download', () => {
  it('redirects to a presigned GET that the storage service honours: a valid HDF5 file matching the API', async () => {
    actAs(world.users.analyst);
    const res = await download(world.a.scanId);
    expect(res.status).toBe(303);
    const location = res.headers.get('location') ?? '';
    expect(location).toMatch(/^https?:\/\//);
    const file = await fetch(location, { headers: BROWSER });
    const bytes = new Uint8Array(await file.arrayBuffer());
    expect(file.status, new TextDecoder().decode(bytes.slice(0, 300))).toBe(200);
    expect(file.headers.get('content-disposition')).toMatch(
      /^attachment; filename="lobeline-scan-\d+-cal-v\d+-set-v\d+\.h5"$/,
    );
    expect(Array.from(bytes.slice(0, 8))).toEqual(HDF5_SIGNATURE);

    const local = path.join(work, 'downloaded.h5');
    writeFileSync(local, bytes);
    const rt = await loadH5wasmNode();
    const f = new rt.File(local, 'r');
    let summary: unknown;
    try {
      summary = JSON.parse(String((f.get('entry/result/summary') as { value: unknown }).value));
    } finally {
      f.close();
    }
    const api = await callRoute(resultRoute.GET, {
      method: 'GET',
      path: `/api/scans/${world.a.scanId}/result`,
      params: { scanId: String(world.a.scanId) },
    });
    expect(api.status).toBe(200);
    expect(summary).toEqual((api.json as { result: unknown }).result);
  });

  it('a missing object: the browser goes back to the scan page with a sentence, an API client gets JSON', async () => {
    actAs(world.users.analyst);
    const result = await models.ScanResult.findByPk(world.a.resultId);
    const bucket = result!.derived_bucket!;
    const key = result!.derived_key!;
    const aside = `${key}.aside`;
    await copyObject({ fromBucket: bucket, fromKey: key, toBucket: bucket, toKey: aside });
    await deleteObject(bucket, key);
    try {
      const page = await download(world.a.scanId);
      expect(page.status).toBe(303);
      expect(page.headers.get('location')).toBe(`/scans/${world.a.scanId}?download=missing`);
      const api = await download(world.a.scanId, { accept: 'application/json' });
      expect(api.status).toBe(404);
      const body = (await api.json()) as { error: { message: string } };
      expect(body.error.message).toBe(
        'The stored result file of this scan is missing; reduce the scan again to rebuild it.',
      );
    } finally {
      await copyObject({ fromBucket: bucket, fromKey: aside, toBucket: bucket, toKey: key });
      await deleteObject(bucket, aside);
    }
  });
});
