// Shared access checks of the scan API (not a route).
import { z } from 'zod';
import { idParam } from '@/lib/api/route';
import { getScanResult, getScanTeamId } from '@/lib/db/queries/scans';
import { AppError } from '@/lib/errors';
import { type Action, type Actor, authorizeObject } from '@/lib/policy';

export const scanParams = z.object({ scanId: idParam });
export const resultQuery = z.object({ resultId: idParam.optional() });

/** 404 for a missing scan or one of a team the actor may not see, then the policy check for the owning team. */
export async function scanFor(actor: Actor, scanId: number, action: Action) {
  const teamId = await getScanTeamId({ scanId });
  authorizeObject(actor, action, { teamId, surface: 'scan' });
  return teamId;
}

/** A result of the scan the actor may read, with its derived object (404 when it has none). */
export async function resultWithFile(actor: Actor, scanId: number, resultId?: number) {
  await scanFor(actor, scanId, 'result.view');
  const r = await getScanResult({ scanId, resultId });
  if (!r.derivedBucket || !r.derivedKey) {
    throw new AppError('not_found:reduction', { message: 'This result has no stored result file.' });
  }
  return { ...r, derivedBucket: r.derivedBucket, derivedKey: r.derivedKey };
}
