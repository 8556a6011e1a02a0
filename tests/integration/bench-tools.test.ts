// Calibration bench routes (issue 15): the raw frame for the bench and a fitting tool run server-side on it.
// Real MariaDB and S3 from scripts/test.sh; the world's scan is a generated file (helpers/world.ts SYNTH_BASE).
// Truth checked: the frame read back equals the generated file's counts (sum over the frame), and the centre tool
// finds the generator's centre within its reported errors.
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';

vi.mock('server-only', () => ({}));

const frameRoute = await import('@/app/api/scans/[scanId]/raw-frame/route');
const { decodeFloats } = await import('@/components/bench/wire');
const toolRoute = await import('@/app/api/scans/[scanId]/bench/[tool]/route');
const { closeSequelize } = await import('@/lib/db');
const { closeReductionQueue } = await import('@/lib/queue/reduction-queue');
const { closeS3Client } = await import('@/lib/storage/s3');
const { planScan, renderSignal } = await import('@/reduction/synth/model');
const { callRoute } = await import('./helpers/call');
const { actAs, clearSession } = await import('./helpers/session');
const { makeWorld, SYNTH_BASE } = await import('./helpers/world');

type World = Awaited<ReturnType<typeof makeWorld>>;
let world: World;

beforeAll(async () => {
  world = await makeWorld({ data: true });
});

afterAll(async () => {
  clearSession();
  await world?.cleanup();
  await closeReductionQueue();
  closeS3Client();
  await closeSequelize();
});

describe('GET /api/scans/[scanId]/raw-frame', () => {
  it('gives the analyst the raw frame at full resolution, its total one Poisson draw of the generator', async () => {
    actAs(world.users.analyst);
    const scanId = world.a.scanId;
    const full = await callRoute(frameRoute.GET, {
      method: 'GET',
      path: `/api/scans/${scanId}/raw-frame`,
      params: { scanId: String(scanId) },
      query: { step: 0 },
    });
    expect(full.status).toBe(200);
    const j = full.json as {
      meta: { shape: { nX: number; nY: number }; experimentKind: string };
      counts: { dtype: 'float32' | 'float64'; base64: string };
    };
    const plan = planScan(SYNTH_BASE);
    const { nX, nY } = j.meta.shape;
    expect(nX).toBe(plan.options.size);
    expect(j.meta.experimentKind).toBe(plan.options.kind);
    const counts = decodeFloats(j.counts);
    expect(counts.length).toBe(nX * nY);
    const total = counts.reduce((s, v) => s + v, 0);
    // the file is one Poisson draw of the generator's expected frame: its total within 5σ of the expected total
    const expected = renderSignal(plan, 0, new Float64Array(nX * nY)).reduce((s, v) => s + v, 0);
    expect(Math.abs(total - expected)).toBeLessThan(5 * Math.sqrt(expected));
    const far = await callRoute(frameRoute.GET, {
      method: 'GET',
      path: `/api/scans/${scanId}/raw-frame`,
      params: { scanId: String(scanId) },
      query: { step: 4000 },
    });
    expect(far.status).toBe(409);
  });
});

describe('POST /api/scans/[scanId]/bench/[tool]', () => {
  it('runs the centre finder of the scan kind and recovers the generator’s centre', async () => {
    actAs(world.users.pi);
    const scanId = world.a.scanId;
    const plan = planScan(SYNTH_BASE);
    const cal = plan.calibration;
    const r = await callRoute(toolRoute.POST, {
      method: 'POST',
      path: `/api/scans/${scanId}/bench/centre`,
      params: { scanId: String(scanId), tool: 'centre' },
      body: {
        step: 0,
        calibration: {
          momentum_per_pixel_au: cal.momentum_per_pixel_au,
          rotation_deg: cal.rotation_deg,
          mirror: cal.mirror,
          detector_ellipticity: cal.detector_ellipticity,
        },
      },
    });
    expect(r.status).toBe(200);
    const j = r.json as { value: { x: number; y: number }; stdErr: { x: number; y: number }; warnings: string[] };
    expect(Math.abs(j.value.x - cal.center_px[0])).toBeLessThan(5 * j.stdErr.x + 0.05);
    expect(Math.abs(j.value.y - cal.center_px[1])).toBeLessThan(5 * j.stdErr.y + 0.05);
  });

  it('answers 400 with a plain sentence for an unknown tool, a missing input or an unknown field', async () => {
    actAs(world.users.analyst);
    const scanId = world.a.scanId;
    const call = (tool: string, body: unknown) =>
      callRoute(toolRoute.POST, {
        method: 'POST',
        path: `/api/scans/${scanId}/bench/${tool}`,
        params: { scanId: String(scanId), tool },
        body,
      });
    expect((await call('magic', {})).status).toBe(400);
    const ring = await call('ring', { step: 0 });
    expect(ring.status).toBe(400);
    expect(JSON.stringify(ring.json)).toMatch(/needs an annulus/);
    expect((await call('ring', { step: 0, colour: 'red' })).status).toBe(400);
  });
});
