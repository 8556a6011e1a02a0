// POST: the PI approves this calibration version; it becomes the campaign's current one.
// GET: what approving it would change (pair before → after, scans a re-reduction would redo), for the confirmation.
import { versionApprovePreviewRoute, versionApproveRoute } from '../../../access';

export const GET = versionApprovePreviewRoute('calibration');
export const POST = versionApproveRoute('calibration');
