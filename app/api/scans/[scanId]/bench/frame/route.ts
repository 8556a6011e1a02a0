// GET /api/scans/[scanId]/bench/frame?step=&bin=: one raw frame of the scan for the calibration bench (issue 15),
// full resolution (bin = 1) or summed over bin × bin blocks (counts stay counts), with its background frame and the
// shot numbers, as base64 little-endian Float32 arrays. Analysts and the team's PI ('bench.use'); never the steward.
import { z } from 'zod';
import { apiRoute, jsonResponse } from '@/lib/api/route';
import { readBenchFrame } from '@/lib/bench/raw-frame';
import { scanFor, scanParams } from '../../access';

const query = z.object({
  step: z.coerce.number().int('a whole number').min(0, 'at least 0').max(4095, 'at most 4095').default(0),
  bin: z.coerce
    .number()
    .int('a whole number')
    .refine((v) => [1, 2, 4, 8].includes(v), 'one of 1, 2, 4, 8')
    .default(1),
});

function binned(
  counts: Float64Array,
  nX: number,
  nY: number,
  bin: number,
): { data: Float32Array; nX: number; nY: number } {
  const bx = Math.floor(nX / bin);
  const by = Math.floor(nY / bin);
  const out = new Float32Array(bx * by);
  for (let iy = 0; iy < by * bin; iy++) {
    for (let ix = 0; ix < bx * bin; ix++) {
      const k = Math.floor(iy / bin) * bx + Math.floor(ix / bin);
      out[k] = out[k]! + counts[iy * nX + ix]!;
    }
  }
  return { data: out, nX: bx, nY: by };
}

const b64 = (a: Float32Array) => Buffer.from(a.buffer, a.byteOffset, a.byteLength).toString('base64');

export const GET = apiRoute({ params: scanParams, query }, async ({ actor, params, query }) => {
  await scanFor(actor, params.scanId, 'bench.use');
  const f = await readBenchFrame(params.scanId, query.step);
  const c = binned(f.counts, f.nX, f.nY, query.bin);
  const b = f.background ? binned(f.background, f.nX, f.nY, query.bin) : null;
  return jsonResponse(
    {
      scanId: params.scanId,
      step: f.step,
      steps: f.meta.shape.nStep,
      bin: query.bin,
      nX: c.nX,
      nY: c.nY,
      kind: f.meta.experimentKind,
      majorAxisDeg: f.meta.majorAxisAngleDeg,
      wavelengthNm: f.meta.wavelengthNm,
      ellipticity: f.meta.ellipticity,
      shots: f.shots,
      backgroundShots: f.backgroundShots,
      counts: b64(c.data),
      background: b ? b64(b.data) : null,
    },
    { headers: { 'cache-control': 'private, max-age=600' } },
  );
});
