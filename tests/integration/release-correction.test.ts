// A quarantined file released with corrected metadata (issue: the correction never reached the reduction).
// The file comes from the project's forward model (reduction/synth) with its wavelength left out on purpose
// (BrokenKind `missing_wavelength`); the analyst releases it with the wavelength the run sheet gives, 800 nm
// (the Ti:sapphire fundamental, common practice). The reduction must then run with 800 nm and say so in the
// result's provenance (`input.overrides`, an optional field of the result JSON), while the stored bytes stay as
// they were (SHA-256 by node:crypto, FIPS 180-4).
import { createHash, randomUUID } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';

vi.mock('server-only', () => ({}));

const { POST: releasePOST } = await import('@/app/api/raw-files/[id]/release/route');
const { getDb, closeSequelize } = await import('@/lib/db');
const { processReduction } = await import('@/lib/jobs/reduce-scan');
const { getReductionQueue, closeReductionQueue } = await import('@/lib/queue/reduction-queue');
const { buckets, putObject, getObjectStream, closeS3Client } = await import('@/lib/storage/s3');
const models = await import('@/models');
const { loadH5wasmNode } = await import('@/reduction/hdf5/node');
const { planScan } = await import('@/reduction/synth/model');
const { writeSynthScan } = await import('@/reduction/synth/scan-file');
const { callRoute } = await import('./helpers/call');
const { actAs, clearSession } = await import('./helpers/session');
const { makeWorld, SYNTH_BASE } = await import('./helpers/world');
const { rawFileRow } = await import('./helpers/rows');

type World = Awaited<ReturnType<typeof makeWorld>>;
let world: World;
const work = mkdtempSync(path.join(tmpdir(), 'lobeline-release-test-'));

beforeAll(async () => {
  getDb();
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

async function storedSha(bucket: string, key: string): Promise<string> {
  const { body } = await getObjectStream(bucket, key);
  const h = createHash('sha256');
  for await (const c of body as AsyncIterable<Buffer>) h.update(c);
  return h.digest('hex');
}

describe('releasing a quarantined file with a corrected wavelength', () => {
  it('reduces with the correction and records it in the result’s provenance', async () => {
    const t = world.a;
    const file = path.join(work, 'no-wavelength.h5');
    writeSynthScan(
      await loadH5wasmNode(),
      file,
      planScan({ ...SYNTH_BASE, target: 'Ar', seed: 77 }),
      'missing_wavelength',
    );
    const bytes = new Uint8Array(readFileSync(file));
    const sha256 = createHash('sha256').update(bytes).digest('hex');
    const key = `raw/${t.teamSlug}/${t.shiftId}/${randomUUID()}.h5`;
    await putObject({ bucket: buckets().raw, key, body: bytes, contentLength: bytes.length });
    const reasons = ['/entry/instrument/source/wavelength: missing (the fundamental wavelength is required).'];
    const raw = await models.RawFile.create(
      rawFileRow(t.teamId, {
        sha256,
        storage_key: key,
        size_bytes: bytes.length,
        status: 'quarantined',
        quarantine_reasons: reasons,
      }),
    );
    const scan = await models.Scan.create({
      team_id: t.teamId,
      campaign_id: t.campaignId,
      shift_id: t.shiftId,
      raw_file_id: raw.id,
      experiment_kind: 'angular_streaking',
      title: 'released after correction',
      target: 'Ar',
      wavelength_nm: null,
      ellipticity: null,
      helicity: null,
      step_quantity: 'intensity',
      n_steps: 2,
      n_y: 128,
      n_x: 128,
      started_at: new Date(),
      status: 'quarantined',
      status_message: reasons[0]!,
      flag_note: null,
      latest_result_id: null,
      offset_deg: null,
      offset_err_deg: null,
      created_by: null,
    } as never);

    actAs(world.users.analyst);
    const released = await callRoute(releasePOST, {
      method: 'POST',
      path: `/api/raw-files/${raw.id}/release`,
      params: { id: String(raw.id) },
      body: { mode: 'revalidate', metadataOverride: { wavelengthNm: 800 } },
    });
    expect(released.status, JSON.stringify(released.json)).toBe(200);

    // The release queued the reduction; run that job here, as the worker would.
    const job = await models.ReductionJob.findOne({ where: { scan_id: scan.id }, order: [['id', 'DESC']] });
    expect(job, 'the release queues a reduction').not.toBeNull();
    for (const q of await getReductionQueue().getJobs(['waiting', 'delayed', 'prioritized'])) {
      if (q?.data.scanId === scan.id) await q.remove().catch(() => undefined);
    }
    await processReduction(
      { scanId: scan.id, calibrationId: job!.calibration_id, settingsId: job!.settings_id, reductionJobId: job!.id },
      { attemptsMade: 0, maxAttempts: 1, updateProgress: async () => undefined },
    ).catch(() => undefined);
    const after = await models.ReductionJob.findByPk(job!.id);
    expect(after?.status, after?.error_message ?? '').toBe('succeeded');
    const reduced = await models.Scan.findByPk(scan.id);
    expect(reduced?.status).toBe('reduced');
    const result = await models.ScanResult.findByPk(reduced!.latest_result_id!);
    expect(result!.result_json.input.wavelength_nm).toBe(800);
    expect(result!.result_json.input.overrides).toEqual({ wavelength_nm: 800 });
    // the stored raw object is unchanged
    expect(await storedSha(raw.bucket, raw.storage_key)).toBe(sha256);
  });
});
