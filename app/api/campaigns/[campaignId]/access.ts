// Shared access checks and version-route builders of the campaign API (not a route: Next only serves route.ts).
import { z } from 'zod';
import { apiRoute, idParam, jsonResponse } from '@/lib/api/route';
import { rereduceAfterApproval } from '@/lib/bench/rereduce-after-approval';
import {
  approvalPreview,
  approveVersion,
  createVersion,
  getVersion,
  listVersions,
  updateDraft,
  type VersionKind,
} from '@/lib/db/queries/calibrations';
import { getCampaignTeamId } from '@/lib/db/queries/scans';
import { AppError } from '@/lib/errors';
import { type Action, type Actor, authorizeObject, can } from '@/lib/policy';

export const campaignParams = z.object({ campaignId: idParam });
export const versionParams = z.object({ campaignId: idParam, versionId: idParam });

/** 404 for a missing campaign or one of a team the actor may not see, then the policy check for the owning team. */
export async function campaignFor(actor: Actor, campaignId: number, action: Action) {
  const teamId = await getCampaignTeamId({ campaignId });
  authorizeObject(actor, action, { teamId, surface: 'campaign' });
  return teamId;
}

/** What the actor may do on this campaign (for showing buttons; the server checks again on every change). */
export function campaignAbilities(actor: Actor, teamId: number) {
  return {
    viewResults: can(actor, 'result.view', { teamId }),
    viewCalibration: can(actor, 'calibration.view', { teamId }),
    editCalibration: can(actor, 'calibration.edit', { teamId }),
    approveCalibration: can(actor, 'calibration.approve', { teamId }),
    startReduction: can(actor, 'reduction.start', { teamId }),
    upload: can(actor, 'upload.create', { teamId }),
    viewCitation: can(actor, 'citation.view', { teamId }),
  };
}

const noteSchema = z.string().trim().max(2000, 'at most 2000 characters').nullish();
export const versionBody = z.object({ body: z.unknown(), note: noteSchema });

/**
 * Body limit of a calibration or settings version: 1 MiB, which bounds a bad-pixel list to well under 100 000
 * [row, column] pairs (a 1024 × 1024 detector with 10 % dead pixels stays far below it).
 */
export const VERSION_MAX_BODY_BYTES = 1024 * 1024;

/** GET (list) and POST (new draft) for `/api/campaigns/[id]/{calibrations|settings}`. */
export function versionCollectionRoutes(kind: VersionKind) {
  return {
    GET: apiRoute({ params: campaignParams }, async ({ actor, params }) => {
      await campaignFor(actor, params.campaignId, 'calibration.view');
      return { versions: await listVersions({ campaignId: params.campaignId, kind }) };
    }),
    POST: apiRoute(
      { params: campaignParams, body: versionBody, maxBodyBytes: VERSION_MAX_BODY_BYTES },
      async ({ actor, params, body, ip }) => {
        await campaignFor(actor, params.campaignId, 'calibration.edit');
        const version = await createVersion({
          campaignId: params.campaignId,
          kind,
          body: body.body,
          note: body.note,
          actor,
          ip,
        });
        // RFC 9110 §15.3.2: a request that created a resource answers 201 Created.
        return jsonResponse({ version }, { status: 201 });
      },
    ),
  };
}

async function versionInCampaign(kind: VersionKind, campaignId: number, versionId: number) {
  const v = await getVersion({ kind, versionId });
  if (v.version.campaignId !== campaignId) throw new AppError('not_found:calibration');
  return v;
}

/** GET / PATCH (draft edit) for one version. */
export function versionItemRoutes(kind: VersionKind) {
  return {
    GET: apiRoute({ params: versionParams }, async ({ actor, params }) => {
      const v = await versionInCampaign(kind, params.campaignId, params.versionId);
      authorizeObject(actor, 'calibration.view', { teamId: v.teamId, surface: kind });
      return { version: v.version };
    }),
    PATCH: apiRoute(
      { params: versionParams, body: versionBody, maxBodyBytes: VERSION_MAX_BODY_BYTES },
      async ({ actor, params, body }) => {
        const v = await versionInCampaign(kind, params.campaignId, params.versionId);
        authorizeObject(actor, 'calibration.edit', { teamId: v.teamId, surface: kind });
        return { version: await updateDraft({ kind, versionId: params.versionId, body: body.body, note: body.note }) };
      },
    ),
  };
}

/** POST approve for one version (PI). */
/** GET on the approve route: what the approval would change, for the PI's confirmation (PI only, like POST). */
export function versionApprovePreviewRoute(kind: VersionKind) {
  return apiRoute({ params: versionParams }, async ({ actor, params }) => {
    const v = await versionInCampaign(kind, params.campaignId, params.versionId);
    authorizeObject(actor, 'calibration.approve', { teamId: v.teamId, surface: kind });
    return { preview: await approvalPreview({ kind, versionId: params.versionId }) };
  });
}

/**
 * POST approve (PI). Optional body `{ rereduce: true }` (the calibration bench, C7): after the approval the campaign
 * is re-reduced as one batch with the new current pair; the answer then carries `batch` (null when there is nothing
 * to reduce or the other kind has no approved version yet).
 */
const approveBody = z.object({ rereduce: z.boolean().optional() }).optional();

export function versionApproveRoute(kind: VersionKind) {
  return apiRoute({ params: versionParams, body: approveBody }, async ({ actor, params, body, ip }) => {
    const v = await versionInCampaign(kind, params.campaignId, params.versionId);
    authorizeObject(actor, 'calibration.approve', { teamId: v.teamId, surface: kind });
    const approved = await approveVersion({ kind, versionId: params.versionId, actor, ip });
    if (!body?.rereduce) return approved;
    const batch = await rereduceAfterApproval({ campaignId: params.campaignId, teamId: v.teamId, actor, ip });
    return { ...approved, batch };
  });
}
