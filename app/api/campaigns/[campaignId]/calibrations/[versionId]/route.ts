// GET one calibration version; PATCH changes a draft that no result uses yet (otherwise 409: save a new version).
import { versionItemRoutes } from '../../access';

export const { GET, PATCH } = versionItemRoutes('calibration');
