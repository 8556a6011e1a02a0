import 'server-only';
// The fixity report for data stewards (C10/C11, issue 14): coverage of the rolling plan (stored files checked within
// the period / all stored files), the oldest check, files never checked, and every file whose last check failed,
// with its campaign, the expected and the found SHA-256, where it was read and when. Catalogue metadata only.
import { QueryTypes } from 'sequelize';
import { getDb } from '@/lib/db';
import { getEnv } from '@/lib/env';
import { AppError } from '@/lib/errors';
import { fixityBatchSize } from '@/lib/stewardship/fixity-plan';

export interface FixityFailureDto {
  rawFileId: number;
  fileName: string;
  teamName: string;
  campaignId: number | null;
  campaignName: string | null;
  archiveState: string;
  outcome: 'mismatch' | 'missing';
  expected: string;
  found: string | null;
  bucket: string | null;
  key: string | null;
  checkedAt: string;
  flaggedSince: string;
  message: string | null;
}

export interface FixityReportDto {
  periodDays: number;
  everyMs: number;
  /** Files one scheduled run checks (⌈files × every / period⌉). */
  batchSize: number;
  total: number;
  checkedWithinPeriod: number;
  neverChecked: number;
  oldestCheckAt: string | null;
  lastCheckAt: string | null;
  checksLast24h: number;
  failures: { rows: FixityFailureDto[]; total: number; page: number; pageSize: number };
}

const iso = (v: Date | string | null) => (v === null ? null : new Date(v).toISOString());

export async function fixityReport(opts: { page: number; pageSize: number }): Promise<FixityReportDto> {
  const env = getEnv();
  const periodDays = env.LOBELINE_FIXITY_PERIOD_DAYS;
  try {
    const db = getDb();
    const [summary] = await db.query<{
      total: number | string;
      within: number | string | null;
      never: number | string | null;
      oldest: Date | string | null;
      latest: Date | string | null;
    }>(
      `SELECT COUNT(*) AS total,
              SUM(last_fixity_at >= UTC_TIMESTAMP(3) - INTERVAL :days DAY) AS within,
              SUM(last_fixity_at IS NULL) AS never,
              MIN(last_fixity_at) AS oldest, MAX(last_fixity_at) AS latest
         FROM raw_files WHERE deleted_at IS NULL`,
      { replacements: { days: periodDays }, type: QueryTypes.SELECT },
    );
    const [recent] = await db.query<{ n: number | string }>(
      'SELECT COUNT(*) AS n FROM fixity_checks WHERE checked_at >= UTC_TIMESTAMP(3) - INTERVAL 1 DAY',
      { type: QueryTypes.SELECT },
    );
    const from = `FROM raw_files rf
        JOIN teams t ON t.id = rf.team_id
        LEFT JOIN scans s ON s.id = (SELECT MIN(s2.id) FROM scans s2 WHERE s2.raw_file_id = rf.id)
        LEFT JOIN campaigns c ON c.id = s.campaign_id
        JOIN fixity_checks fc ON fc.id = (SELECT MAX(f2.id) FROM fixity_checks f2 WHERE f2.raw_file_id = rf.id)
       WHERE rf.deleted_at IS NULL AND rf.fixity_flagged_at IS NOT NULL`;
    const [count] = await db.query<{ n: number | string }>(`SELECT COUNT(*) AS n ${from}`, { type: QueryTypes.SELECT });
    const rows = await db.query<{
      id: number;
      original_name: string;
      team_name: string;
      campaign_id: number | null;
      campaign_name: string | null;
      archive_state: string;
      outcome: 'mismatch' | 'missing' | 'match' | null;
      sha256: string;
      sha256_found: string | null;
      bucket: string | null;
      object_key: string | null;
      checked_at: Date | string;
      fixity_flagged_at: Date | string;
      message: string | null;
    }>(
      `SELECT rf.id, rf.original_name, t.name AS team_name, c.id AS campaign_id, c.name AS campaign_name,
              rf.archive_state, fc.outcome, rf.sha256, fc.sha256_found, fc.bucket, fc.object_key, fc.checked_at,
              rf.fixity_flagged_at, fc.message
         ${from}
        ORDER BY fc.checked_at DESC, rf.id DESC
        LIMIT :limit OFFSET :offset`,
      {
        replacements: { limit: opts.pageSize, offset: (opts.page - 1) * opts.pageSize },
        type: QueryTypes.SELECT,
      },
    );
    const total = Number(summary?.total ?? 0);
    return {
      periodDays,
      everyMs: env.LOBELINE_FIXITY_EVERY,
      batchSize: fixityBatchSize(total, env.LOBELINE_FIXITY_EVERY, periodDays),
      total,
      checkedWithinPeriod: Number(summary?.within ?? 0),
      neverChecked: Number(summary?.never ?? 0),
      oldestCheckAt: iso(summary?.oldest ?? null),
      lastCheckAt: iso(summary?.latest ?? null),
      checksLast24h: Number(recent?.n ?? 0),
      failures: {
        total: Number(count?.n ?? 0),
        page: opts.page,
        pageSize: opts.pageSize,
        rows: rows.map((r) => ({
          rawFileId: r.id,
          fileName: r.original_name,
          teamName: r.team_name,
          campaignId: r.campaign_id,
          campaignName: r.campaign_name,
          archiveState: r.archive_state,
          outcome: r.outcome === 'missing' ? 'missing' : 'mismatch',
          expected: r.sha256,
          found: r.sha256_found,
          bucket: r.bucket,
          key: r.object_key,
          checkedAt: new Date(r.checked_at).toISOString(),
          flaggedSince: new Date(r.fixity_flagged_at).toISOString(),
          message: r.message,
        })),
      },
    };
  } catch (err) {
    if (err instanceof AppError) throw err;
    throw new AppError('unavailable:database', { cause: err, context: { what: 'fixityReport' } });
  }
}
