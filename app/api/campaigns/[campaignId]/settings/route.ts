// GET (all versions) and POST (a new draft version) of the campaign's settings (FORMATS §3).
import { versionCollectionRoutes } from '../access';

export const { GET, POST } = versionCollectionRoutes('settings');
