// POST: the PI approves this calibration version; it becomes the campaign's current one.
import { versionApproveRoute } from '../../../access';

export const POST = versionApproveRoute('calibration');
