// GET /api/shifts/[shiftId]/stored?sha256=a,b,…: which of these checksums the shift's team has already stored (the
// drop panel asks before sending, so a duplicate is shown as one). For those who may upload into the shift.
import { z } from 'zod';
import { apiRoute } from '@/lib/api/route';
import { findStoredBySha256 } from '@/lib/ingest/lookup';
import { sha256HexSchema, shiftParams } from '@/lib/ingest/schemas';

const query = z.object({
  sha256: z
    .string()
    .max(100 * 65, 'at most 100 checksums')
    .transform((s) => s.split(',').filter(Boolean))
    .pipe(z.array(sha256HexSchema).max(100, 'at most 100 checksums')),
});

export const GET = apiRoute({ params: shiftParams, query }, async ({ actor, params, query }) => ({
  matches: await findStoredBySha256(actor, params.shiftId, query.sha256),
}));
