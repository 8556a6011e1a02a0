import 'server-only';
// Public landing pages of campaigns (C10, issue 14): whether a campaign's page is published, publishing and
// withdrawing it (audited in the same transaction), and what the public page may read. Who may do which is decided
// in lib/policy.ts ('landing.publish' for PIs and stewards; 'landing.read' / 'landing.files' for anyone).
import { randomBytes } from 'node:crypto';
import { QueryTypes } from 'sequelize';
import { recordAudit } from '@/lib/audit';
import { missingForDataCite } from '@/lib/citation/records';
import { getDb } from '@/lib/db';
import { getCitationContext } from '@/lib/db/queries/citations';
import { AppError } from '@/lib/errors';
import type { PublicSubject } from '@/lib/policy';
import { Campaign, CampaignLanding } from '@/models';

export interface LandingState {
  campaignId: number;
  /** The stable address part (/data/<publicId>), or null when the page was never published. */
  publicId: string | null;
  published: boolean;
  publishedAt: string | null;
  /** The path of the public page (/data/<publicId>), or null when never published. */
  path: string | null;
}

/** The most files a public page lists; a longer list says how many more there are. */
export const PUBLIC_FILE_LIMIT = 1000;

export interface PublicFile {
  name: string;
  sizeBytes: number;
  sha256: string;
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

/** 12 characters from a–z and 0–9 (about 62 bits): not guessable, short enough to read out. */
export function newPublicId(): string {
  const alphabet = 'abcdefghijklmnopqrstuvwxyz0123456789';
  const bytes = randomBytes(12);
  let out = '';
  for (const b of bytes) out += alphabet[b % 36]; // 256 % 36 = 4: a bias under 2 % per character, harmless here
  return out;
}

export const PUBLIC_ID = /^[a-z0-9]{12}$/;

function toState(campaignId: number, row: CampaignLanding | null): LandingState {
  return {
    campaignId,
    publicId: row?.public_id ?? null,
    published: !!row?.published,
    publishedAt: row?.published && row.published_at ? new Date(row.published_at).toISOString() : null,
    path: row ? `/data/${row.public_id}` : null,
  };
}

export async function getLandingState({ campaignId }: { campaignId: number }): Promise<LandingState> {
  return guard('getLandingState', async () =>
    toState(campaignId, await CampaignLanding.findOne({ where: { campaign_id: campaignId } })),
  );
}

/**
 * Publishes or withdraws the campaign's landing page. Publishing needs what a citation cannot do without: at least
 * one creator, a publisher and a publication year (DataCite's mandatory properties, SCIENCE.md §11.3, except the
 * DOI, which is often registered after the page exists because the registration names it).
 */
export async function setLandingPublished({
  campaignId,
  teamId,
  published,
  actor,
  ip,
}: {
  campaignId: number;
  teamId: number;
  published: boolean;
  actor: { userId: number; email: string };
  ip: string | null;
}): Promise<LandingState> {
  if (published) {
    const ctx = await getCitationContext({ campaignId, origin: '' });
    const missing = missingForDataCite(ctx).filter((m) => !m.startsWith('DOI'));
    if (missing.length) {
      throw new AppError('conflict:campaign', {
        message: `A public page needs ${missing.join(', ')} in the citation metadata. Add them first.`,
        details: missing.map((m) => `${m}: missing.`),
      });
    }
  }
  return guard('setLandingPublished', () =>
    getDb().transaction(async (transaction) => {
      const campaign = await Campaign.findByPk(campaignId, { transaction, lock: transaction.LOCK.UPDATE });
      if (!campaign) throw new AppError('not_found:campaign');
      let row = await CampaignLanding.findOne({ where: { campaign_id: campaignId }, transaction });
      if (!row && !published) return toState(campaignId, null);
      if (row && row.published === published) return toState(campaignId, row);
      if (!row) {
        row = await CampaignLanding.create(
          {
            campaign_id: campaignId,
            public_id: newPublicId(),
            published: true,
            published_at: new Date(),
            changed_by: actor.userId,
          },
          { transaction },
        );
      } else {
        await row.update(
          { published, published_at: published ? new Date() : row.published_at, changed_by: actor.userId },
          { transaction },
        );
      }
      await recordAudit(
        {
          action: published ? 'campaign.landing_published' : 'campaign.landing_withdrawn',
          actorId: actor.userId,
          actorEmail: actor.email,
          teamId,
          campaignId,
          targetType: 'campaign',
          targetId: campaignId,
          ip,
          details: { page: `/data/${row.public_id}` },
        },
        { transaction },
      );
      return toState(campaignId, row);
    }),
  );
}

/** The public page's subject (for lib/policy.ts authorizePublic), or null for an address that was never given out. */
export async function getPublicLanding({
  publicId,
}: {
  publicId: string;
}): Promise<{ campaignId: number; subject: PublicSubject } | null> {
  if (!PUBLIC_ID.test(publicId)) return null;
  return guard('getPublicLanding', async () => {
    const row = await CampaignLanding.findOne({ where: { public_id: publicId } });
    if (!row) return null;
    const campaign = await Campaign.findByPk(row.campaign_id, { attributes: ['id', 'embargo_until'] });
    if (!campaign) return null;
    return {
      campaignId: campaign.id,
      subject: {
        published: row.published,
        embargoUntil: campaign.embargo_until ?? null,
        today: new Date().toISOString().slice(0, 10),
      },
    };
  });
}

/**
 * The files a public page lists: the same files the citation records count (stored, not replaced, not deleted, not
 * under an embargo of their own), by name, with size and SHA-256, at most PUBLIC_FILE_LIMIT of them.
 * Call only after authorizePublic('landing.files', …).
 */
export async function listPublicFiles({
  campaignId,
}: {
  campaignId: number;
}): Promise<{ files: PublicFile[]; total: number }> {
  return guard('listPublicFiles', async () => {
    const where = `rf.deleted_at IS NULL AND rf.status <> 'replaced'
        AND (rf.embargo_until IS NULL OR rf.embargo_until <= UTC_DATE())
        AND rf.id IN (SELECT s.raw_file_id FROM scans s WHERE s.campaign_id = :campaignId)`;
    const rows = await getDb().query<{ name: string; size: number | string; sha256: string }>(
      `SELECT rf.original_name AS name, rf.size_bytes AS size, rf.sha256 FROM raw_files rf WHERE ${where}
        ORDER BY rf.original_name, rf.id LIMIT ${PUBLIC_FILE_LIMIT}`,
      { replacements: { campaignId }, type: QueryTypes.SELECT },
    );
    const count = await getDb().query<{ n: number | string }>(`SELECT COUNT(*) AS n FROM raw_files rf WHERE ${where}`, {
      replacements: { campaignId },
      type: QueryTypes.SELECT,
    });
    return {
      files: rows.map((r) => ({ name: r.name, sizeBytes: Number(r.size), sha256: r.sha256 })),
      total: Number(count[0]?.n ?? 0),
    };
  });
}
