// GET /api/scans/[scanId]/raw-frame?step= : one raw frame of the scan (and its background frame) with the file's
// metadata, for the calibration bench (C7), which reduces it in the browser with the server's reducer. Counts are
// sent as base64 little-endian Float32 when every value is exactly a float32 (detector counts), else Float64.
import { z } from 'zod';
import { encodeFloats } from '@/components/bench/wire';
import { apiRoute, jsonResponse } from '@/lib/api/route';
import { readBenchFrame } from '@/lib/bench/raw-frame';
import { scanFor, scanParams } from '../access';

const query = z.object({
  step: z.coerce.number().int('a whole number').min(0, 'at least 0').max(4095, 'at most 4095').default(0),
});

export const GET = apiRoute({ params: scanParams, query }, async ({ actor, params, query }) => {
  await scanFor(actor, params.scanId, 'result.view');
  const f = await readBenchFrame({ scanId: params.scanId, step: query.step });
  // The stored raw file never changes (its checksum is catalogued): the browser may keep the frame a while.
  return jsonResponse(
    {
      scanId: f.scanId,
      sha256: f.sha256,
      step: f.step,
      meta: f.meta,
      counts: encodeFloats(f.counts),
      background: f.background ? encodeFloats(f.background) : null,
    },
    { headers: { 'cache-control': 'private, max-age=600' } },
  );
});
