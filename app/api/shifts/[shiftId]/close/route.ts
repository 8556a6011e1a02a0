// POST /api/shifts/[shiftId]/close: close the shift and e-mail the receipt to the operator and the team's analysts.
// Closing a closed shift again re-sends a receipt that could not be sent the first time.
import { apiRoute } from '@/lib/api/route';
import { closeShiftBody, shiftParams } from '@/lib/ingest/schemas';
import { closeShift } from '@/lib/ingest/service';

export const POST = apiRoute({ params: shiftParams, body: closeShiftBody }, ({ actor, params, body, ip }) =>
  closeShift(actor, params.shiftId, body ?? {}, ip),
);
