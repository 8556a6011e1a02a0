import 'server-only';
// The data steward's file register (C10, issue 14): every stored raw file of every team with its campaign, checksum,
// size, storage place and class, metadata completeness (the campaign's citation items and the file's own, with the
// missing ones named), retention, embargo, archive state and last fixity check. Filtered, sorted and paged in SQL.
// It reads catalogue metadata only: no result, image, map or calibration column is selected here.
import { QueryTypes } from 'sequelize';
import {
  CITATION_ITEM_COUNT,
  citationItems,
  FILE_ITEM_COUNT,
  FILE_OPTIONAL_KEYS,
  fileItems,
  summarize,
} from '@/lib/citation/completeness';
import { citationBodySchema, EMPTY_CITATION } from '@/lib/citation/schema';
import { getDb } from '@/lib/db';
import { AppError } from '@/lib/errors';
import type { ArchiveStateWord } from '@/lib/stewardship/archive-words';
import type { ScanMetadata } from '@/reduction/formats';

export const REGISTER_SORTS = [
  'file',
  'team',
  'campaign',
  'size',
  'completeness',
  'retention',
  'embargo',
  'fixity',
  'stored',
] as const;
export type RegisterSort = (typeof REGISTER_SORTS)[number];

export interface RegisterFilter {
  teamId?: number;
  campaignId?: number;
  /** File name or checksum prefix. */
  q?: string;
  completeness?: 'complete' | 'incomplete';
  embargo?: 'embargoed' | 'open';
  /** `online` (or the older word `live`), `archived`, or `moving` (being archived or restored). */
  archive?: 'online' | 'live' | 'archived' | 'moving';
  /** Files whose last fixity check failed. */
  fixity?: 'flagged';
  /** Files under a legal hold, or with a deletion asked for. */
  hold?: 'held' | 'deletion';
  sort: RegisterSort;
  dir: 'asc' | 'desc';
  page: number;
  pageSize: number;
}

export interface RegisterRowDto {
  id: number;
  fileName: string;
  teamId: number;
  teamName: string;
  campaignId: number | null;
  campaignName: string | null;
  sha256: string;
  sizeBytes: number;
  bucket: string;
  storageKey: string;
  storageClass: string;
  status: string;
  storedAt: string;
  completeness: { score: number; requiredMissing: string[]; recommendedMissing: string[] };
  /** The file's own retention date, else its campaign's. */
  retentionUntil: string | null;
  /** Whether retentionUntil is the file's own (true) or its campaign's. */
  retentionOwn: boolean;
  embargoUntil: string | null;
  legalHold: boolean;
  /** An open deletion request (asked for, not yet carried out or withdrawn). */
  deletion: { requestId: number; state: 'waiting' | 'confirmed' } | null;
  /** Where the bytes are (lib/stewardship/archive.ts): online, archiving, archived, restoring. */
  archiveState: ArchiveStateWord;
  /** The archive copy's bucket when archived (or being archived). */
  archiveBucket: string | null;
  archivedAt: string | null;
  /** The last fixity check found the object missing or changed. */
  fixityFlagged: boolean;
  lastFixityAt: string | null;
  lastFixityOk: boolean | null;
}

// Completeness as a number in SQL, the same count as lib/citation/completeness.ts summarize() of the campaign's
// citation items and the file's items: citation items present (kept in campaign_citations.items_present), 1 when
// the file's metadata could be read, and 1 for each optional descriptive field stated (present and not JSON null).
const stated = (key: string) =>
  `IF(JSON_TYPE(JSON_EXTRACT(rf.metadata, '$.${key}')) IS NULL OR JSON_TYPE(JSON_EXTRACT(rf.metadata, '$.${key}')) = 'NULL', 0, 1)`;
const SCORE_SQL = `((COALESCE(cc.items_present, 0) + IF(rf.metadata IS NULL, 0, 1 + ${FILE_OPTIONAL_KEYS.map(
  stated,
).join(' + ')})) / ${CITATION_ITEM_COUNT + FILE_ITEM_COUNT})`;
const EMBARGO_SQL = 'COALESCE(rf.embargo_until, c.embargo_until)';
// A file's own retention date wins over its campaign's (lib/stewardship/deletion-rules.ts effectiveRetention).
const RETENTION_SQL = 'COALESCE(rf.retention_until, c.retention_until)';

const ORDER: Record<RegisterSort, string> = {
  file: 'rf.original_name',
  team: 't.name',
  campaign: 'c.name',
  size: 'rf.size_bytes',
  completeness: SCORE_SQL,
  retention: RETENTION_SQL,
  embargo: EMBARGO_SQL,
  fixity: 'rf.last_fixity_at',
  stored: 'rf.created_at',
};

interface Row {
  id: number;
  original_name: string;
  team_id: number;
  team_name: string;
  campaign_id: number | null;
  campaign_name: string | null;
  sha256: string;
  size_bytes: number | string;
  bucket: string;
  storage_key: string;
  storage_class: string;
  status: string;
  created_at: Date | string;
  metadata: unknown;
  citation_body: unknown;
  retention_until: string | Date | null;
  retention_own: number | boolean;
  embargo_until: string | Date | null;
  legal_hold: number | boolean;
  deletion_id: number | null;
  deletion_confirmed: number | boolean | null;
  archived_at: Date | string | null;
  archive_state: ArchiveStateWord;
  archive_bucket: string | null;
  fixity_flagged_at: Date | string | null;
  last_fixity_at: Date | string | null;
  last_fixity_ok: number | boolean | null;
}

const day = (v: string | Date | null) =>
  v === null ? null : typeof v === 'string' ? v.slice(0, 10) : v.toISOString().slice(0, 10);
const parse = (v: unknown) => (typeof v === 'string' ? JSON.parse(v) : v);

export async function listRegister(f: RegisterFilter): Promise<{ rows: RegisterRowDto[]; total: number }> {
  const where: string[] = ['rf.deleted_at IS NULL'];
  const r: Record<string, unknown> = {};
  if (f.teamId) {
    where.push('rf.team_id = :teamId');
    r.teamId = f.teamId;
  }
  if (f.campaignId) {
    where.push('c.id = :campaignId');
    r.campaignId = f.campaignId;
  }
  if (f.q) {
    where.push('(rf.original_name LIKE :like OR rf.sha256 LIKE :prefix)');
    r.like = `%${f.q.replace(/[\\%_]/g, (m) => `\\${m}`)}%`;
    r.prefix = `${f.q.toLowerCase().replace(/[^0-9a-f]/g, '')}%`;
  }
  if (f.completeness === 'complete') where.push(`${SCORE_SQL} >= 1`);
  if (f.completeness === 'incomplete') where.push(`${SCORE_SQL} < 1`);
  if (f.embargo === 'embargoed') where.push(`${EMBARGO_SQL} > UTC_DATE()`);
  if (f.embargo === 'open') where.push(`(${EMBARGO_SQL} IS NULL OR ${EMBARGO_SQL} <= UTC_DATE())`);
  if (f.hold === 'held') where.push('(rf.legal_hold OR COALESCE(c.legal_hold, 0))');
  if (f.hold === 'deletion') where.push('d.id IS NOT NULL');
  if (f.archive === 'archived') where.push("rf.archive_state = 'archived'");
  if (f.archive === 'live' || f.archive === 'online') where.push("rf.archive_state = 'online'");
  if (f.archive === 'moving') where.push("rf.archive_state IN ('archiving', 'restoring')");
  if (f.fixity === 'flagged') where.push('rf.fixity_flagged_at IS NOT NULL');
  // A file's campaign is the campaign of its first scan (a duplicate sent to another campaign links the same file).
  const from = `FROM raw_files rf
      JOIN teams t ON t.id = rf.team_id
      LEFT JOIN scans s ON s.id = (SELECT MIN(s2.id) FROM scans s2 WHERE s2.raw_file_id = rf.id)
      LEFT JOIN campaigns c ON c.id = s.campaign_id
      LEFT JOIN campaign_citations cc ON cc.campaign_id = c.id
      LEFT JOIN deletion_requests d ON d.id = (SELECT MAX(d2.id) FROM deletion_requests d2
                 WHERE d2.raw_file_id = rf.id AND d2.cancelled_at IS NULL AND d2.object_removed_at IS NULL)
     WHERE ${where.join(' AND ')}`;
  const dir = f.dir === 'asc' ? 'ASC' : 'DESC';
  try {
    const db = getDb();
    const [countRows, rows] = await Promise.all([
      db.query<{ n: number | string }>(`SELECT COUNT(*) AS n ${from}`, { replacements: r, type: QueryTypes.SELECT }),
      db.query<Row>(
        `SELECT rf.id, rf.original_name, rf.team_id, t.name AS team_name, c.id AS campaign_id, c.name AS campaign_name,
                rf.sha256, rf.size_bytes, rf.bucket, rf.storage_key, rf.storage_class, rf.status, rf.created_at,
                rf.metadata, cc.body AS citation_body, ${RETENTION_SQL} AS retention_until,
                rf.retention_until IS NOT NULL AS retention_own, ${EMBARGO_SQL} AS embargo_until,
                (rf.legal_hold OR COALESCE(c.legal_hold, 0)) AS legal_hold, d.id AS deletion_id,
                d.confirmed_at IS NOT NULL AS deletion_confirmed,
                rf.archived_at, rf.archive_state, rf.archive_bucket, rf.fixity_flagged_at,
                rf.last_fixity_at, rf.last_fixity_ok
           ${from}
          ORDER BY ${ORDER[f.sort]} ${dir}, rf.id ${dir}
          LIMIT :limit OFFSET :offset`,
        {
          replacements: { ...r, limit: f.pageSize, offset: (f.page - 1) * f.pageSize },
          type: QueryTypes.SELECT,
        },
      ),
    ]);
    return {
      total: Number(countRows[0]?.n ?? 0),
      rows: rows.map((row) => {
        const body = row.citation_body ? citationBodySchema.safeParse(parse(row.citation_body)) : null;
        const c = summarize([
          ...citationItems(body?.success ? body.data : EMPTY_CITATION),
          ...fileItems((parse(row.metadata) as ScanMetadata | null) ?? null),
        ]);
        return {
          id: row.id,
          fileName: row.original_name,
          teamId: row.team_id,
          teamName: row.team_name,
          campaignId: row.campaign_id,
          campaignName: row.campaign_name,
          sha256: row.sha256,
          sizeBytes: Number(row.size_bytes),
          bucket: row.bucket,
          storageKey: row.storage_key,
          storageClass: row.storage_class,
          status: row.status,
          storedAt: new Date(row.created_at).toISOString(),
          completeness: {
            score: c.score,
            requiredMissing: c.requiredMissing,
            recommendedMissing: c.recommendedMissing,
          },
          retentionUntil: day(row.retention_until),
          retentionOwn: !!row.retention_own,
          embargoUntil: day(row.embargo_until),
          legalHold: !!row.legal_hold,
          deletion: row.deletion_id
            ? { requestId: row.deletion_id, state: row.deletion_confirmed ? 'confirmed' : 'waiting' }
            : null,
          archiveState: row.archive_state,
          archiveBucket: row.archive_state === 'online' ? null : row.archive_bucket,
          archivedAt: row.archived_at ? new Date(row.archived_at).toISOString() : null,
          fixityFlagged: row.fixity_flagged_at !== null,
          lastFixityAt: row.last_fixity_at ? new Date(row.last_fixity_at).toISOString() : null,
          lastFixityOk: row.last_fixity_ok === null ? null : !!row.last_fixity_ok,
        };
      }),
    };
  } catch (err) {
    if (err instanceof AppError) throw err;
    const name = (err as Error)?.name ?? '';
    throw new AppError(/Connection|Timeout/.test(name) ? 'unavailable:database' : 'internal:database', {
      cause: err,
      context: { what: 'listRegister' },
    });
  }
}

/** Teams and campaigns for the register's filters (names only). */
export async function listRegisterScopes(): Promise<{
  teams: { id: number; name: string }[];
  campaigns: { id: number; name: string; teamId: number }[];
}> {
  const db = getDb();
  const [teams, campaigns] = await Promise.all([
    db.query<{ id: number; name: string }>('SELECT id, name FROM teams ORDER BY name', { type: QueryTypes.SELECT }),
    db.query<{ id: number; name: string; team_id: number }>('SELECT id, name, team_id FROM campaigns ORDER BY name', {
      type: QueryTypes.SELECT,
    }),
  ]);
  return { teams, campaigns: campaigns.map((c) => ({ id: c.id, name: c.name, teamId: c.team_id })) };
}
