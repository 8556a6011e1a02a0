// GET /api/shifts/[shiftId]: the shift page's data (header, files, unfinished uploads, log, what the caller may do).
import { apiRoute } from '@/lib/api/route';
import { shiftParams } from '@/lib/ingest/schemas';
import { getShiftView } from '@/lib/ingest/service';

export const GET = apiRoute({ params: shiftParams }, ({ actor, params }) => getShiftView(actor, params.shiftId));
