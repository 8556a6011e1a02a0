// GET (all versions) and POST (a new draft version) of the campaign's calibration (FORMATS §2).
import { versionCollectionRoutes } from '../access';

export const { GET, POST } = versionCollectionRoutes('calibration');
