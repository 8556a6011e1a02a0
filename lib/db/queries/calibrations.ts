import 'server-only';
// Versioned detector calibrations (FORMATS §2) and analysis settings (FORMATS §3) of a campaign.
// A version is edited while it is a draft and no result uses it; once a result uses it (`locked_at`, set in the
// worker's result transaction) it never changes again, and an edit creates the next version. The PI approves a
// version: it becomes the campaign's current one of its kind, the previously current one is retired.
import { Op, QueryTypes, type Transaction } from 'sequelize';
import { recordAudit } from '@/lib/audit';
import { getDb } from '@/lib/db';
import { AppError } from '@/lib/errors';
import type { VersionStatus } from '@/models';
import { AnalysisSettingsVersion, Campaign, DetectorCalibrationVersion, ScanResult, User } from '@/models';
import { parseAnyCalibration, parseSettings } from '@/reduction/formats';
import { currentResultSql, firstOfItsFile } from './scans';

// TYPES //

export type VersionKind = 'calibration' | 'settings';

export interface VersionDto {
  id: number;
  kind: VersionKind;
  campaignId: number;
  version: number;
  status: VersionStatus;
  body: unknown;
  note: string | null;
  createdBy: string | null;
  createdAt: string;
  approvedBy: string | null;
  approvedAt: string | null;
  lockedAt: string | null;
  /** Whether this is the campaign's current approved version of its kind. */
  isCurrent: boolean;
  /** Results computed with this version. */
  resultCount: number;
}

type VersionModel = typeof DetectorCalibrationVersion | typeof AnalysisSettingsVersion;
type VersionRow = DetectorCalibrationVersion | AnalysisSettingsVersion;

// HELPERS //

function modelOf(kind: VersionKind): VersionModel {
  return kind === 'calibration' ? DetectorCalibrationVersion : AnalysisSettingsVersion;
}

const iso = (d: Date | null | undefined) => (d ? new Date(d).toISOString() : null);

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

/** Parses a body of the given kind, throwing 400 with one sentence per problem. */
export function parseVersionBody(kind: VersionKind, body: unknown): unknown {
  const r = kind === 'calibration' ? parseAnyCalibration(body) : parseSettings(body);
  if (!r.ok) {
    throw new AppError(kind === 'calibration' ? 'bad_request:calibration' : 'bad_request:settings', {
      message: kind === 'calibration' ? 'The calibration is not valid.' : 'The analysis settings are not valid.',
      details: r.problems,
    });
  }
  return r.value;
}

async function namesById(ids: (number | null)[]): Promise<Map<number, string>> {
  const wanted = [...new Set(ids.filter((x): x is number => x != null))];
  if (!wanted.length) return new Map();
  const users = await User.findAll({ where: { id: { [Op.in]: wanted } }, attributes: ['id', 'name', 'email'] });
  return new Map(users.map((u) => [u.id, u.name || u.email]));
}

function toDto(
  kind: VersionKind,
  row: VersionRow,
  currentId: number | null,
  names: Map<number, string>,
  resultCount: number,
): VersionDto {
  return {
    id: row.id,
    kind,
    campaignId: row.campaign_id,
    version: row.version,
    status: row.status,
    body: row.body,
    note: row.note,
    createdBy: row.created_by == null ? null : (names.get(row.created_by) ?? null),
    createdAt: iso(row.created_at) ?? '',
    approvedBy: row.approved_by == null ? null : (names.get(row.approved_by) ?? null),
    approvedAt: iso(row.approved_at),
    lockedAt: iso(row.locked_at),
    isCurrent: currentId === row.id,
    resultCount,
  };
}

// QUERIES //

/** Every version of one kind of a campaign, newest first. */
export async function listVersions({
  campaignId,
  kind,
}: {
  campaignId: number;
  kind: VersionKind;
}): Promise<VersionDto[]> {
  return guard('listVersions', async () => {
    const campaign = await Campaign.findByPk(campaignId, {
      attributes: ['id', 'current_calibration_id', 'current_settings_id'],
    });
    if (!campaign) throw new AppError('not_found:campaign');
    const Model = modelOf(kind);
    const rows = (await (Model as typeof DetectorCalibrationVersion).findAll({
      where: { campaign_id: campaignId },
      order: [['version', 'DESC']],
    })) as VersionRow[];
    const col = kind === 'calibration' ? 'calibration_id' : 'settings_id';
    const counts = (await ScanResult.findAll({
      attributes: [col, [getDb().fn('COUNT', getDb().col('id')), 'n']],
      where: { [col]: { [Op.in]: rows.map((r) => r.id) } },
      group: [col],
      raw: true,
    })) as unknown as Record<string, number>[];
    const countById = new Map(counts.map((c) => [Number(c[col]), Number(c.n)]));
    const names = await namesById(rows.flatMap((r) => [r.created_by, r.approved_by]));
    const currentId = kind === 'calibration' ? campaign.current_calibration_id : campaign.current_settings_id;
    return rows.map((r) => toDto(kind, r, currentId, names, countById.get(r.id) ?? 0));
  });
}

/** One version with its campaign's team (for the access check), or 404. */
export async function getVersion({
  kind,
  versionId,
}: {
  kind: VersionKind;
  versionId: number;
}): Promise<{ version: VersionDto; teamId: number }> {
  return guard('getVersion', async () => {
    const row = (await (modelOf(kind) as typeof DetectorCalibrationVersion).findByPk(versionId)) as VersionRow | null;
    if (!row) throw new AppError('not_found:calibration');
    const campaign = await Campaign.findByPk(row.campaign_id);
    if (!campaign) throw new AppError('not_found:campaign');
    const names = await namesById([row.created_by, row.approved_by]);
    const currentId = kind === 'calibration' ? campaign.current_calibration_id : campaign.current_settings_id;
    const resultCount = await ScanResult.count({
      where: { [kind === 'calibration' ? 'calibration_id' : 'settings_id']: row.id },
    });
    return { version: toDto(kind, row, currentId, names, resultCount), teamId: campaign.team_id };
  });
}

// MUTATIONS //

/**
 * Creates the next version (draft) of a campaign's calibration or settings. The body is parsed (FORMATS §2/§3) and
 * stored completed with its defaults.
 */
export async function createVersion({
  campaignId,
  kind,
  body,
  note,
  actor,
  ip,
}: {
  campaignId: number;
  kind: VersionKind;
  body: unknown;
  note?: string | null;
  actor: { userId: number; email: string };
  ip?: string | null;
}): Promise<VersionDto> {
  const parsed = parseVersionBody(kind, body);
  return guard('createVersion', async () => {
    const db = getDb();
    const id = await db.transaction(async (transaction) => {
      const campaign = await Campaign.findByPk(campaignId, { transaction, lock: transaction.LOCK.UPDATE });
      if (!campaign) throw new AppError('not_found:campaign');
      const Model = modelOf(kind) as typeof DetectorCalibrationVersion;
      const max =
        ((await Model.max('version', { where: { campaign_id: campaignId }, transaction })) as number | null) ?? 0;
      const row = await Model.create(
        {
          campaign_id: campaignId,
          version: max + 1,
          body: parsed as DetectorCalibrationVersion['body'],
          note: note?.trim() || null,
          status: 'draft',
          created_by: actor.userId,
          approved_by: null,
          approved_at: null,
          locked_at: null,
        },
        { transaction },
      );
      await recordAudit(
        {
          action: kind === 'calibration' ? 'calibration.created' : 'settings.created',
          actorId: actor.userId,
          actorEmail: actor.email,
          teamId: campaign.team_id,
          targetType: kind === 'calibration' ? 'detector_calibration' : 'analysis_settings',
          targetId: row.id,
          ip: ip ?? null,
          details: { campaignId, version: row.version },
        },
        { transaction },
      );
      return row.id;
    });
    return (await getVersion({ kind, versionId: id })).version;
  });
}

/** Changes a draft in place; refused (409) once a result uses it or after approval: save a new version then. */
export async function updateDraft({
  kind,
  versionId,
  body,
  note,
}: {
  kind: VersionKind;
  versionId: number;
  body: unknown;
  note?: string | null;
}): Promise<VersionDto> {
  const parsed = parseVersionBody(kind, body);
  return guard('updateDraft', async () => {
    await getDb().transaction(async (transaction) => {
      const Model = modelOf(kind) as typeof DetectorCalibrationVersion;
      const row = await Model.findByPk(versionId, { transaction, lock: transaction.LOCK.UPDATE });
      if (!row) throw new AppError('not_found:calibration');
      if (row.locked_at || row.status !== 'draft') {
        throw new AppError(kind === 'calibration' ? 'conflict:calibration' : 'conflict:settings', {
          message: `Version ${row.version} is ${row.locked_at ? 'used by a result' : row.status} and cannot change; save your edit as a new version.`,
        });
      }
      await row.update(
        { body: parsed as DetectorCalibrationVersion['body'], note: note?.trim() || row.note },
        { transaction },
      );
    });
    return (await getVersion({ kind, versionId })).version;
  });
}

/**
 * Approves a version: it becomes the campaign's current one of its kind, the previous current one is retired.
 *
 * @returns the approved version and the campaign's current pair after the change
 */
export async function approveVersion({
  kind,
  versionId,
  actor,
  ip,
}: {
  kind: VersionKind;
  versionId: number;
  actor: { userId: number; email: string };
  ip?: string | null;
}): Promise<{ version: VersionDto; currentCalibrationId: number | null; currentSettingsId: number | null }> {
  return guard('approveVersion', async () => {
    const pair = await getDb().transaction(async (transaction: Transaction) => {
      const Model = modelOf(kind) as typeof DetectorCalibrationVersion;
      const row = await Model.findByPk(versionId, { transaction, lock: transaction.LOCK.UPDATE });
      if (!row) throw new AppError('not_found:calibration');
      const campaign = await Campaign.findByPk(row.campaign_id, { transaction, lock: transaction.LOCK.UPDATE });
      if (!campaign) throw new AppError('not_found:campaign');
      const previous = kind === 'calibration' ? campaign.current_calibration_id : campaign.current_settings_id;
      if (previous != null && previous !== row.id) {
        await Model.update({ status: 'retired' }, { where: { id: previous, status: 'approved' }, transaction });
      }
      await row.update({ status: 'approved', approved_by: actor.userId, approved_at: new Date() }, { transaction });
      await campaign.update(
        kind === 'calibration' ? { current_calibration_id: row.id } : { current_settings_id: row.id },
        { transaction },
      );
      await recordAudit(
        {
          action: kind === 'calibration' ? 'calibration.approved' : 'settings.approved',
          actorId: actor.userId,
          actorEmail: actor.email,
          teamId: campaign.team_id,
          targetType: kind === 'calibration' ? 'detector_calibration' : 'analysis_settings',
          targetId: row.id,
          ip: ip ?? null,
          details: { campaignId: campaign.id, version: row.version, previousId: previous },
        },
        { transaction },
      );
      return { currentCalibrationId: campaign.current_calibration_id, currentSettingsId: campaign.current_settings_id };
    });
    return { version: (await getVersion({ kind, versionId })).version, ...pair };
  });
}

// APPROVAL PREVIEW //

export interface ApprovalPreviewDto {
  kind: VersionKind;
  version: number;
  /** The campaign's current pair now and after the approval (version numbers; null when none). */
  before: { calibration: number | null; settings: number | null };
  after: { calibration: number | null; settings: number | null };
  /** Scans whose current result is not computed with the pair after the approval (a re-reduction would redo them). */
  scansToReduce: {
    scanId: number;
    title: string | null;
    /** Versions of the scan's current result now (null: no approved result yet). */
    from: { calibration: number | null; settings: number | null } | null;
  }[];
  /** How many scans in all (the list above stops at 50). */
  scansToReduceTotal: number;
  /** Trial results already computed with the pair after the approval: they become the scans' results. */
  trialResultsBecomingCurrent: number;
}

/**
 * What approving a version changes, for the PI's confirmation: the campaign's pair before → after, the scans a
 * re-reduction with the new pair would redo (with the versions of their current result), and the trial results
 * that the approval turns into current results.
 */
export async function approvalPreview({
  kind,
  versionId,
}: {
  kind: VersionKind;
  versionId: number;
}): Promise<ApprovalPreviewDto> {
  return guard('approvalPreview', async () => {
    const Model = modelOf(kind) as typeof DetectorCalibrationVersion;
    const row = await Model.findByPk(versionId);
    if (!row) throw new AppError('not_found:calibration');
    const campaign = await Campaign.findByPk(row.campaign_id);
    if (!campaign) throw new AppError('not_found:campaign');
    const afterCal = kind === 'calibration' ? row.id : campaign.current_calibration_id;
    const afterSet = kind === 'settings' ? row.id : campaign.current_settings_id;
    const [curCal, curSet, aCal, aSet] = await Promise.all([
      campaign.current_calibration_id ? DetectorCalibrationVersion.findByPk(campaign.current_calibration_id) : null,
      campaign.current_settings_id ? AnalysisSettingsVersion.findByPk(campaign.current_settings_id) : null,
      afterCal ? DetectorCalibrationVersion.findByPk(afterCal) : null,
      afterSet ? AnalysisSettingsVersion.findByPk(afterSet) : null,
    ]);
    const db = getDb();
    const scans = await db.query<Record<string, unknown>>(
      `SELECT s.id, s.title, dc.version AS cal_v, ast.version AS set_v,
              EXISTS (SELECT 1 FROM scan_results x WHERE x.scan_id = s.id AND x.calibration_id = :afterCal
                         AND x.settings_id = :afterSet) AS has_after
         FROM scans s
         LEFT JOIN scan_results r ON r.id = ${currentResultSql('s')}
         LEFT JOIN detector_calibrations dc ON dc.id = r.calibration_id
         LEFT JOIN analysis_settings ast ON ast.id = r.settings_id
        WHERE s.campaign_id = :campaignId AND s.status <> 'quarantined' AND ${firstOfItsFile('s')}
        ORDER BY s.id`,
      {
        replacements: { campaignId: campaign.id, afterCal: afterCal ?? 0, afterSet: afterSet ?? 0 },
        type: QueryTypes.SELECT,
      },
    );
    // A scan that already has a result with the new pair needs no re-reduction (that result becomes current).
    const redo = scans.filter((s) => !Number(s.has_after));
    const otherApproved = kind === 'calibration' ? aSet?.approved_at != null : aCal?.approved_at != null;
    const trial =
      afterCal && afterSet && otherApproved && row.approved_at == null
        ? await ScanResult.count({ where: { calibration_id: afterCal, settings_id: afterSet } })
        : 0;
    return {
      kind,
      version: row.version,
      before: { calibration: curCal?.version ?? null, settings: curSet?.version ?? null },
      after: { calibration: aCal?.version ?? null, settings: aSet?.version ?? null },
      scansToReduce: redo.slice(0, 50).map((s) => ({
        scanId: Number(s.id),
        title: (s.title as string | null) ?? null,
        from:
          s.cal_v == null ? null : { calibration: Number(s.cal_v), settings: s.set_v == null ? null : Number(s.set_v) },
      })),
      scansToReduceTotal: redo.length,
      trialResultsBecomingCurrent: trial,
    };
  });
}
