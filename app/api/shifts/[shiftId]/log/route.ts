// GET  /api/shifts/[shiftId]/log: the shift log, oldest first.
// POST /api/shifts/[shiftId]/log: add a timestamped note with optional structured fields (logEntryBody).
import { apiRoute, jsonResponse } from '@/lib/api/route';
import { logEntryBody, shiftParams } from '@/lib/ingest/schemas';
import { addLogEntry, getShiftView } from '@/lib/ingest/service';

export const GET = apiRoute({ params: shiftParams }, async ({ actor, params }) => ({
  entries: (await getShiftView(actor, params.shiftId)).log,
}));

export const POST = apiRoute({ params: shiftParams, body: logEntryBody }, async ({ actor, params, body, ip }) =>
  jsonResponse({ entry: await addLogEntry(actor, params.shiftId, body, ip) }, { status: 201 }),
);
