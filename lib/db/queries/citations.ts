import 'server-only';
// Campaign citation metadata (C10, issue 14): read, save (with its audit event in the same transaction), and the
// context the citation records are built from (lib/citation/records.ts). Every function takes one object argument.
import { QueryTypes } from 'sequelize';
import { recordAudit } from '@/lib/audit';
import { type Completeness, citationItems, summarize } from '@/lib/citation/completeness';
import type { CitationContext } from '@/lib/citation/records';
import { type CitationBody, citationBodySchema, EMPTY_CITATION } from '@/lib/citation/schema';
import { getDb } from '@/lib/db';
import { AppError } from '@/lib/errors';
import { Campaign, CampaignCitation, CampaignLanding, Team, User } from '@/models';

export interface CitationDto {
  campaignId: number;
  campaign: {
    name: string;
    teamName: string;
    target: string;
    wavelengthNm: number;
    experimentKind: string;
    embargoUntil: string | null;
    retentionUntil: string | null;
    legalHold: boolean;
    legalHoldNote: string | null;
  };
  citation: CitationBody;
  completeness: Completeness;
  files: { count: number; totalBytes: number };
  updatedAt: string | null;
  updatedBy: string | null;
}

async function guard<T>(what: string, fn: () => Promise<T>): Promise<T> {
  try {
    getDb();
    return await fn();
  } catch (err) {
    if (err instanceof AppError) throw err;
    const name = (err as Error)?.name ?? '';
    const unavailable = /Connection|Timeout|HostNotReachable/.test(name);
    throw new AppError(unavailable ? 'unavailable:database' : 'internal:database', { cause: err, context: { what } });
  }
}

/** A stored body read back through the schema, so an older or hand-edited row still comes out in today's shape. */
function readBody(raw: unknown): CitationBody {
  const value = typeof raw === 'string' ? JSON.parse(raw) : raw;
  const r = citationBodySchema.safeParse(value ?? {});
  return r.success ? r.data : EMPTY_CITATION;
}

/**
 * Distinct stored raw files of the campaign (not replaced, not deleted, not under an embargo of their own that
 * outlasts today): how many and how many bytes. A file embargoed apart from its campaign stays out of the records.
 */
async function fileSummary(campaignId: number): Promise<{ count: number; totalBytes: number }> {
  const rows = await getDb().query<{ n: number | string; bytes: number | string | null }>(
    `SELECT COUNT(*) AS n, SUM(rf.size_bytes) AS bytes FROM raw_files rf
      WHERE rf.deleted_at IS NULL AND rf.status <> 'replaced'
        AND (rf.embargo_until IS NULL OR rf.embargo_until <= UTC_DATE())
        AND rf.id IN (SELECT s.raw_file_id FROM scans s WHERE s.campaign_id = :campaignId)`,
    { replacements: { campaignId }, type: QueryTypes.SELECT },
  );
  return { count: Number(rows[0]?.n ?? 0), totalBytes: Number(rows[0]?.bytes ?? 0) };
}

export async function getCitation({ campaignId }: { campaignId: number }): Promise<CitationDto> {
  return guard('getCitation', async () => {
    const campaign = await Campaign.findByPk(campaignId, {
      include: [{ model: Team, as: 'team', attributes: ['name'] }],
    });
    if (!campaign) throw new AppError('not_found:campaign');
    const row = await CampaignCitation.findOne({ where: { campaign_id: campaignId } });
    const citation = row ? readBody(row.body) : EMPTY_CITATION;
    const editor = row?.updated_by ? await User.findByPk(row.updated_by, { attributes: ['name'] }) : null;
    const team = (campaign as Campaign & { team?: Team }).team;
    return {
      campaignId,
      campaign: {
        name: campaign.name,
        teamName: team?.name ?? '',
        target: campaign.target,
        wavelengthNm: Number(campaign.wavelength_nm),
        experimentKind: campaign.experiment_kind,
        embargoUntil: campaign.embargo_until ?? null,
        retentionUntil: campaign.retention_until ?? null,
        legalHold: !!campaign.legal_hold,
        legalHoldNote: campaign.legal_hold_note ?? null,
      },
      citation,
      completeness: summarize(citationItems(citation)),
      files: await fileSummary(campaignId),
      updatedAt: row ? new Date(row.updated_at).toISOString() : null,
      updatedBy: editor?.name ?? null,
    };
  });
}

/** Replaces the campaign's citation metadata and records who changed which fields. */
export async function saveCitation({
  campaignId,
  teamId,
  body,
  actor,
  ip,
}: {
  campaignId: number;
  teamId: number;
  body: CitationBody;
  actor: { userId: number; email: string };
  ip: string | null;
}): Promise<CitationDto> {
  await guard('saveCitation', () =>
    getDb().transaction(async (transaction) => {
      const campaign = await Campaign.findByPk(campaignId, { transaction, lock: transaction.LOCK.UPDATE });
      if (!campaign) throw new AppError('not_found:campaign');
      const row = await CampaignCitation.findOne({ where: { campaign_id: campaignId }, transaction });
      const before = row ? readBody(row.body) : EMPTY_CITATION;
      const completeness = summarize(citationItems(body));
      const values = {
        body,
        items_present: completeness.items.filter((i) => i.present).length,
        items_total: completeness.items.length,
        required_missing: completeness.requiredMissing,
        updated_by: actor.userId,
      };
      if (row) await row.update(values, { transaction });
      else await CampaignCitation.create({ campaign_id: campaignId, ...values }, { transaction });
      const changed = (Object.keys(body) as (keyof CitationBody)[]).filter(
        (k) => JSON.stringify(body[k]) !== JSON.stringify(before[k]),
      );
      await recordAudit(
        {
          action: 'citation.updated',
          actorId: actor.userId,
          actorEmail: actor.email,
          teamId,
          targetType: 'campaign',
          targetId: campaignId,
          ip,
          details: { changed, score: completeness.score, requiredMissing: completeness.requiredMissing },
        },
        { transaction },
      );
    }),
  );
  return getCitation({ campaignId });
}

/** What the record builders need; `today` is the UTC day. */
export async function getCitationContext({
  campaignId,
  origin,
}: {
  campaignId: number;
  origin: string;
}): Promise<CitationContext> {
  const dto = await getCitation({ campaignId });
  // A published public page is the dataset's address (schema.org url); otherwise the campaign's page in Lobeline.
  const landing = await guard('getCitationContext', () =>
    CampaignLanding.findOne({ where: { campaign_id: campaignId, published: true }, attributes: ['public_id'] }),
  );
  return {
    campaign: {
      id: campaignId,
      name: dto.campaign.name,
      target: dto.campaign.target,
      wavelengthNm: dto.campaign.wavelengthNm,
      experimentKind: dto.campaign.experimentKind,
      embargoUntil: dto.campaign.embargoUntil,
    },
    citation: dto.citation,
    files: dto.files,
    today: new Date().toISOString().slice(0, 10),
    landingUrl: landing ? `${origin}/data/${landing.public_id}` : `${origin}/campaigns/${campaignId}`,
  };
}
