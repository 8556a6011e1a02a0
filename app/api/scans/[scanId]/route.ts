// GET /api/scans/[scanId]: the scan, its file, its results (newest first) and recent reduction jobs, plus what the
// caller may do. A steward (metadata reader) gets the scan and file without results and jobs.
import { apiRoute } from '@/lib/api/route';
import { getScanDetail, getScanTeamId } from '@/lib/db/queries/scans';
import { authorizeObject, can } from '@/lib/policy';
import { scanParams } from './access';

export const GET = apiRoute({ params: scanParams }, async ({ actor, params }) => {
  const teamId = await getScanTeamId({ scanId: params.scanId });
  const full = can(actor, 'scan.view', { teamId });
  if (!full) authorizeObject(actor, 'scan.metadata', { teamId, surface: 'scan' });
  const detail = await getScanDetail({ scanId: params.scanId });
  const viewResults = can(actor, 'result.view', { teamId });
  return {
    scan: viewResults ? detail.scan : { ...detail.scan, offsetDeg: null, offsetErrDeg: null, latestResultId: null },
    results: viewResults ? detail.results : [],
    jobs: full ? detail.jobs : [],
    can: {
      viewResults,
      startReduction: can(actor, 'reduction.start', { teamId }),
      flag: can(actor, 'scan.flag', { teamId }),
      restore: can(actor, 'archive.restore', { teamId }),
    },
  };
});
