import 'server-only';
// Campaigns and the opening of shifts (home page, /campaigns/new, /shifts/new). Plain DTOs out; no access checks
// here: callers authorize with the teamId they get back (lib/policy.ts).
import { col, fn, Op, QueryTypes, UniqueConstraintError } from 'sequelize';
import { recordAudit } from '@/lib/audit';
import { getDb } from '@/lib/db';
import { AppError } from '@/lib/errors';
import { Campaign, type Scan, Shift, Team, User } from '@/models';
import type { ExperimentKind } from '@/reduction/formats';
import { db } from './accounts';
import { firstOfItsFile } from './scans';

export interface CampaignSummaryDto {
  id: number;
  teamId: number;
  teamSlug: string;
  teamName: string;
  name: string;
  target: string;
  wavelengthNm: number;
  experimentKind: ExperimentKind;
  description: string | null;
  status: 'active' | 'closed';
  shiftCount: number;
  openShiftCount: number;
  scanCount: number;
  createdAt: string;
}

export interface OpenShiftDto {
  id: number;
  teamId: number;
  campaignId: number;
  campaignName: string;
  title: string;
  openedAt: string;
  openedBy: string | null;
}

const iso = (d: Date | string | null | undefined) => (d ? new Date(d).toISOString() : '');

async function countBy(model: typeof Shift | typeof Scan, campaignIds: number[], where: object = {}) {
  if (campaignIds.length === 0) return new Map<number, number>();
  const rows = (await (model as typeof Shift).findAll({
    attributes: ['campaign_id', [fn('COUNT', col('id')), 'n']],
    where: { campaign_id: { [Op.in]: campaignIds }, ...where },
    group: ['campaign_id'],
    raw: true,
  })) as unknown as { campaign_id: number; n: number | string }[];
  return new Map(rows.map((r) => [Number(r.campaign_id), Number(r.n)]));
}

/** Scans per campaign, a file sent twice counted once (see firstOfItsFile in scans.ts). */
async function countScans(campaignIds: number[]) {
  if (campaignIds.length === 0) return new Map<number, number>();
  const rows = await getDb().query<{ campaign_id: number; n: number | string }>(
    `SELECT s.campaign_id, COUNT(*) AS n FROM scans s WHERE s.campaign_id IN (:ids) AND ${firstOfItsFile('s')}
      GROUP BY s.campaign_id`,
    { replacements: { ids: campaignIds }, type: QueryTypes.SELECT },
  );
  return new Map(rows.map((r) => [Number(r.campaign_id), Number(r.n)]));
}

/** Campaigns of the given teams, newest first, with shift and scan counts. */
export async function listCampaigns({ teamIds }: { teamIds: number[] }): Promise<CampaignSummaryDto[]> {
  if (teamIds.length === 0) return [];
  return db('listCampaigns', async () => {
    const campaigns = await Campaign.findAll({
      where: { team_id: { [Op.in]: teamIds } },
      include: [{ model: Team, as: 'team', attributes: ['id', 'slug', 'name'] }],
      order: [
        ['created_at', 'DESC'],
        ['id', 'DESC'],
      ],
    });
    const ids = campaigns.map((c) => c.id);
    const [shifts, openShifts, scans] = await Promise.all([
      countBy(Shift, ids),
      countBy(Shift, ids, { status: 'open' }),
      countScans(ids),
    ]);
    return campaigns.map((c) => {
      const team = (c as Campaign & { team?: Team }).team;
      return {
        id: c.id,
        teamId: c.team_id,
        teamSlug: team?.slug ?? '',
        teamName: team?.name ?? '',
        name: c.name,
        target: c.target,
        wavelengthNm: Number(c.wavelength_nm),
        experimentKind: c.experiment_kind,
        description: c.description,
        status: c.status,
        shiftCount: shifts.get(c.id) ?? 0,
        openShiftCount: openShifts.get(c.id) ?? 0,
        scanCount: scans.get(c.id) ?? 0,
        createdAt: iso(c.created_at),
      };
    });
  });
}

/** Minimal campaign facts for access checks, or null. */
export async function getCampaignRef({
  campaignId,
}: {
  campaignId: number;
}): Promise<{ id: number; teamId: number; name: string; status: 'active' | 'closed' } | null> {
  return db('getCampaignRef', async () => {
    const c = await Campaign.findByPk(campaignId, { attributes: ['id', 'team_id', 'name', 'status'] });
    return c ? { id: c.id, teamId: c.team_id, name: c.name, status: c.status } : null;
  });
}

export interface NewCampaign {
  teamId: number;
  name: string;
  target: string;
  wavelengthNm: number;
  experimentKind: ExperimentKind;
  description: string | null;
}

/** Creates a campaign and its audit event in one transaction. A duplicate name in the team is a conflict. */
export async function createCampaign(
  input: NewCampaign,
  by: { userId: number; email: string; ip: string },
): Promise<{ id: number }> {
  return db('createCampaign', async () => {
    try {
      return await getDb().transaction(async (t) => {
        const c = await Campaign.create(
          {
            team_id: input.teamId,
            name: input.name,
            target: input.target,
            wavelength_nm: input.wavelengthNm,
            experiment_kind: input.experimentKind,
            description: input.description,
            created_by: by.userId,
            current_calibration_id: null,
            current_settings_id: null,
            embargo_until: null,
          },
          { transaction: t },
        );
        await recordAudit(
          {
            action: 'campaign.created',
            actorId: by.userId,
            actorEmail: by.email,
            teamId: input.teamId,
            targetType: 'campaign',
            targetId: c.id,
            ip: by.ip,
            details: { name: input.name, target: input.target, wavelengthNm: input.wavelengthNm },
          },
          { transaction: t },
        );
        return { id: c.id };
      });
    } catch (err) {
      if (err instanceof UniqueConstraintError) {
        throw new AppError('conflict:campaign', {
          message: 'This team already has a campaign with that name.',
          details: ['name: This team already has a campaign with that name. Choose another name.'],
        });
      }
      throw err;
    }
  });
}

/** Open shifts of the given teams, newest first. */
export async function listOpenShifts({ teamIds }: { teamIds: number[] }): Promise<OpenShiftDto[]> {
  if (teamIds.length === 0) return [];
  return db('listOpenShifts', async () => {
    const shifts = await Shift.findAll({
      where: { team_id: { [Op.in]: teamIds }, status: 'open' },
      include: [{ model: Campaign, as: 'campaign', attributes: ['id', 'name'] }],
      order: [['opened_at', 'DESC']],
      limit: 50,
    });
    const userIds = [...new Set(shifts.map((s) => s.opened_by).filter((x): x is number => x != null))];
    const users = userIds.length
      ? await User.findAll({ where: { id: { [Op.in]: userIds } }, attributes: ['id', 'name'], raw: true })
      : [];
    const names = new Map(users.map((u) => [u.id, u.name]));
    return shifts.map((s) => ({
      id: s.id,
      teamId: s.team_id,
      campaignId: s.campaign_id,
      campaignName: (s as Shift & { campaign?: Campaign }).campaign?.name ?? '',
      title: s.title,
      openedAt: iso(s.opened_at),
      openedBy: s.opened_by != null ? (names.get(s.opened_by) ?? null) : null,
    }));
  });
}

/** Opens a shift on a campaign (the campaign's team owns it) with its audit event. */
export async function openShift(
  input: { campaignId: number; teamId: number; title: string },
  by: { userId: number; email: string; ip: string },
): Promise<{ id: number }> {
  return db('openShift', async () =>
    getDb().transaction(async (t) => {
      const s = await Shift.create(
        {
          team_id: input.teamId,
          campaign_id: input.campaignId,
          title: input.title,
          opened_by: by.userId,
          opened_at: new Date(),
          closed_by: null,
          closed_at: null,
          receipt_sent_at: null,
        },
        { transaction: t },
      );
      await recordAudit(
        {
          action: 'shift.opened',
          actorId: by.userId,
          actorEmail: by.email,
          teamId: input.teamId,
          targetType: 'shift',
          targetId: s.id,
          ip: by.ip,
          details: { campaignId: input.campaignId, title: input.title },
        },
        { transaction: t },
      );
      return { id: s.id };
    }),
  );
}
