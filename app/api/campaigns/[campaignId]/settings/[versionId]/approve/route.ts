// POST: the PI approves this settings version; it becomes the campaign's current one.
// GET: what approving it would change (pair before → after, scans a re-reduction would redo), for the confirmation.
import { versionApprovePreviewRoute, versionApproveRoute } from '../../../access';

export const GET = versionApprovePreviewRoute('settings');
export const POST = versionApproveRoute('settings');
