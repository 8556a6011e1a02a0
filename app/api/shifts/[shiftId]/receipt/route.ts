// GET /api/shifts/[shiftId]/receipt: the end-of-shift record (the same content as the receipt e-mail).
import { apiRoute } from '@/lib/api/route';
import { shiftParams } from '@/lib/ingest/schemas';
import { getShiftReceipt } from '@/lib/ingest/service';

export const GET = apiRoute({ params: shiftParams }, async ({ actor, params }) => ({
  receipt: await getShiftReceipt(actor, params.shiftId),
}));
