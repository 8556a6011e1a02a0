import 'server-only';
// Campaigns' scans and their results for the scan views (C6) and the campaign trend (C8 in small): a server-paged,
// sorted and filtered scan table, one scan with its results and jobs, a result with its per-step rows, trend points,
// reduction batches with their progress. Every function takes one object argument and returns plain DTOs.
import { Op, QueryTypes } from 'sequelize';
import { getDb } from '@/lib/db';
import { AppError } from '@/lib/errors';
import type { ScanStatus } from '@/models';
import {
  AnalysisSettingsVersion,
  Campaign,
  DetectorCalibrationVersion,
  RawFile,
  ReductionBatch,
  ReductionJob,
  SCAN_STATUSES,
  Scan,
  ScanResult,
  Shift,
  Team,
} from '@/models';
import type { LobelineResult } from '@/reduction/formats';

// HELPERS //

const iso = (d: Date | string | null | undefined) => (d ? new Date(d).toISOString() : null);
const num = (v: unknown): number | null => (v === null || v === undefined ? null : Number(v));

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

/**
 * SQL condition: the scan `alias` is the first scan of its raw file in its campaign. A file sent twice (a linked
 * duplicate, lib/ingest/service.ts) keeps a scan row per upload so each shift shows what was sent, but the
 * campaign counts, lists and trends it once.
 */
export function firstOfItsFile(alias: string): string {
  // kept by a trigger: migrations/2026.12.03T10.00.00.scan-counted-as.ts
  return `${alias}.duplicate_of_scan_id IS NULL`;
}

/**
 * SQL scalar subquery: the id of the scan `alias`'s CURRENT result, the newest one computed with a calibration and
 * settings pair that were both approved (approved_at set; a version retired later stays approved). Results of a
 * draft version are trial results: listed apart on the scan page, never the scan's result nor in the trend.
 */
export function currentResultSql(alias: string): string {
  return `(SELECT cr.id FROM scan_results cr
      JOIN detector_calibrations cc ON cc.id = cr.calibration_id
      JOIN analysis_settings cs ON cs.id = cr.settings_id
     WHERE cr.scan_id = ${alias}.id AND cc.approved_at IS NOT NULL AND cs.approved_at IS NOT NULL
     ORDER BY cr.id DESC LIMIT 1)`;
}

// CAMPAIGN //

export interface CampaignDto {
  id: number;
  teamId: number;
  teamSlug: string;
  teamName: string;
  name: string;
  target: string;
  wavelengthNm: number;
  experimentKind: string;
  description: string | null;
  status: string;
  currentCalibration: { id: number; version: number } | null;
  currentSettings: { id: number; version: number } | null;
  counts: Record<ScanStatus, number> & { total: number; flagged: number };
  shifts: {
    id: number;
    title: string;
    status: string;
    openedAt: string | null;
    closedAt: string | null;
    scanCount: number;
  }[];
  createdAt: string | null;
}

/** The team that owns a campaign (for the access check), or 404. */
export async function getCampaignTeamId({ campaignId }: { campaignId: number }): Promise<number> {
  return guard('getCampaignTeamId', async () => {
    const c = await Campaign.findByPk(campaignId, { attributes: ['team_id'] });
    if (!c) throw new AppError('not_found:campaign');
    return c.team_id;
  });
}

/** A campaign with its shifts, scan counts per state and current versions. */
export async function getCampaignOverview({ campaignId }: { campaignId: number }): Promise<CampaignDto> {
  return guard('getCampaignOverview', async () => {
    const c = await Campaign.findByPk(campaignId);
    if (!c) throw new AppError('not_found:campaign');
    const db = getDb();
    const [team, shifts, byStatus, byShift, flagged, cal, set] = await Promise.all([
      Team.findByPk(c.team_id, { attributes: ['slug', 'name'] }),
      Shift.findAll({ where: { campaign_id: campaignId }, order: [['opened_at', 'DESC']] }),
      db.query<{ status: ScanStatus; n: number }>(
        `SELECT s.status, COUNT(*) AS n FROM scans s WHERE s.campaign_id = ? AND ${firstOfItsFile('s')} GROUP BY s.status`,
        { replacements: [campaignId], type: QueryTypes.SELECT },
      ),
      db.query<{ shift_id: number; n: number }>(
        'SELECT shift_id, COUNT(*) AS n FROM scans WHERE campaign_id = ? GROUP BY shift_id',
        { replacements: [campaignId], type: QueryTypes.SELECT },
      ),
      Scan.count({ where: { campaign_id: campaignId, flagged: true } }),
      c.current_calibration_id ? DetectorCalibrationVersion.findByPk(c.current_calibration_id) : null,
      c.current_settings_id ? AnalysisSettingsVersion.findByPk(c.current_settings_id) : null,
    ]);
    const counts = Object.fromEntries(SCAN_STATUSES.map((s) => [s, 0])) as Record<ScanStatus, number>;
    let total = 0;
    for (const r of byStatus) {
      counts[r.status] = Number(r.n);
      total += Number(r.n);
    }
    const perShift = new Map(byShift.map((r) => [Number(r.shift_id), Number(r.n)]));
    return {
      id: c.id,
      teamId: c.team_id,
      teamSlug: team?.slug ?? '',
      teamName: team?.name ?? '',
      name: c.name,
      target: c.target,
      wavelengthNm: c.wavelength_nm,
      experimentKind: c.experiment_kind,
      description: c.description,
      status: c.status,
      currentCalibration: cal ? { id: cal.id, version: cal.version } : null,
      currentSettings: set ? { id: set.id, version: set.version } : null,
      counts: { ...counts, total, flagged },
      shifts: shifts.map((s) => ({
        id: s.id,
        title: s.title,
        status: s.status,
        openedAt: iso(s.opened_at),
        closedAt: iso(s.closed_at),
        scanCount: perShift.get(s.id) ?? 0,
      })),
      createdAt: iso(c.created_at),
    };
  });
}

// SCAN TABLE //

/** Sort keys of the scan table and the column each one orders by (a whitelist: nothing else reaches SQL). */
export const SCAN_SORTS = {
  uploaded: 's.created_at',
  started: 's.started_at',
  title: 's.title',
  target: 's.target',
  status: 's.status',
  offset: 's.offset_deg',
  steps: 's.n_steps',
  id: 's.id',
} as const;
export type ScanSort = keyof typeof SCAN_SORTS;
/** Sort columns declared NOT NULL in the schema (migrations/2026.12.02T01.00.00.initial-schema.ts). */
const NOT_NULL_SORTS: ReadonlySet<ScanSort> = new Set(['uploaded', 'status', 'id']);

export interface ScanListQuery {
  campaignId: number;
  page: number;
  pageSize: number;
  sort: ScanSort;
  dir: 'asc' | 'desc';
  status?: ScanStatus[];
  target?: string;
  shiftId?: number;
  flagged?: boolean;
  /** Text searched in the title and the file name. */
  q?: string;
  /** Leave out result columns (metadata-only readers such as stewards). */
  metadataOnly?: boolean;
}

export interface ScanRowDto {
  id: number;
  title: string | null;
  fileName: string | null;
  sizeBytes: number | null;
  shiftId: number;
  shiftTitle: string | null;
  target: string | null;
  wavelengthNm: number | null;
  experimentKind: string | null;
  stepQuantity: string | null;
  nSteps: number | null;
  nY: number | null;
  nX: number | null;
  status: ScanStatus;
  statusMessage: string | null;
  flagged: boolean;
  startedAt: string | null;
  uploadedAt: string | null;
  offsetDeg: number | null;
  offsetErrDeg: number | null;
  latestResultId: number | null;
  calibrationVersion: number | null;
  settingsVersion: number | null;
}

function likeEscape(s: string): string {
  return s.replace(/[\\%_]/g, (m) => `\\${m}`);
}

/** One page of a campaign's scans, sorted and filtered in MariaDB, with the total matching the filter. */
export async function listCampaignScans(q: ScanListQuery): Promise<{ rows: ScanRowDto[]; total: number }> {
  return guard('listCampaignScans', async () => {
    const where: string[] = ['s.campaign_id = :campaignId', firstOfItsFile('s')];
    const repl: Record<string, unknown> = { campaignId: q.campaignId };
    if (q.status?.length) {
      where.push('s.status IN (:status)');
      repl.status = q.status;
    }
    if (q.target) {
      where.push('s.target = :target');
      repl.target = q.target;
    }
    if (q.shiftId) {
      where.push('s.shift_id = :shiftId');
      repl.shiftId = q.shiftId;
    }
    if (q.flagged !== undefined) {
      where.push('s.flagged = :flagged');
      repl.flagged = q.flagged ? 1 : 0;
    }
    // The free-text filter reads scans.search_text (title, line feed, file name; kept by triggers and indexed with
    // the campaign: migrations/2026.12.02T17.10.00.scan-search-text.ts) instead of joining raw_files. A filter
    // with a line feed of its own could match across the separator, so it takes the two columns as before.
    const needsFile = !!q.q && q.q.includes('\n');
    if (q.q) {
      where.push(
        needsFile
          ? "(s.title LIKE :q ESCAPE '\\\\' OR f.original_name LIKE :q ESCAPE '\\\\')"
          : "s.search_text LIKE :q ESCAPE '\\\\'",
      );
      repl.q = `%${likeEscape(q.q)}%`;
    }
    const whereSql = where.join(' AND ');
    const col = SCAN_SORTS[q.sort];
    const dir = q.dir === 'asc' ? 'ASC' : 'DESC';
    // NULLs last in either direction, then the id as a stable tie-breaker. Columns that are never NULL order without
    // the IS NULL term, so the default order (newest upload first) is read from an index instead of sorted.
    const order = NOT_NULL_SORTS.has(q.sort)
      ? `${col} ${dir}, s.id ${dir}`
      : `${col} IS NULL, ${col} ${dir}, s.id ${dir}`;
    repl.limit = q.pageSize;
    repl.offset = (q.page - 1) * q.pageSize;
    // The worker's headline columns, unless the scan's latest result is a trial one: then the current result's.
    const latestIsTrial = '(lr.id IS NOT NULL AND (lc.approved_at IS NULL OR ls.approved_at IS NULL))';
    const db = getDb();
    const [countRows, rows] = await Promise.all([
      db.query<{ n: number }>(
        `SELECT COUNT(*) AS n FROM scans s ${needsFile ? 'JOIN raw_files f ON f.id = s.raw_file_id' : ''} WHERE ${whereSql}`,
        { replacements: repl, type: QueryTypes.SELECT },
      ),
      db.query<Record<string, unknown>>(
        `SELECT s.id, s.title, s.shift_id, s.target, s.wavelength_nm, s.experiment_kind, s.step_quantity, s.n_steps,
                s.n_y, s.n_x, s.status, s.status_message, s.flagged, s.started_at, s.created_at,
                CASE WHEN ${latestIsTrial} THEN r.offset_deg ELSE s.offset_deg END AS offset_deg,
                CASE WHEN ${latestIsTrial} THEN r.offset_err_deg ELSE s.offset_err_deg END AS offset_err_deg,
                CASE WHEN ${latestIsTrial} THEN r.id ELSE s.latest_result_id END AS latest_result_id,
                f.original_name, f.size_bytes, sh.title AS shift_title,
                dc.version AS cal_version, ast.version AS set_version
           FROM (SELECT s.id FROM scans s ${needsFile ? 'JOIN raw_files f ON f.id = s.raw_file_id' : ''}
                  WHERE ${whereSql} ORDER BY ${order} LIMIT :limit OFFSET :offset) page
           JOIN scans s ON s.id = page.id
           JOIN raw_files f ON f.id = s.raw_file_id
           JOIN shifts sh ON sh.id = s.shift_id
           LEFT JOIN scan_results lr ON lr.id = s.latest_result_id
           LEFT JOIN detector_calibrations lc ON lc.id = lr.calibration_id
           LEFT JOIN analysis_settings ls ON ls.id = lr.settings_id
           LEFT JOIN scan_results r ON r.id = CASE WHEN ${latestIsTrial} THEN ${currentResultSql('s')} ELSE s.latest_result_id END
           LEFT JOIN detector_calibrations dc ON dc.id = r.calibration_id
           LEFT JOIN analysis_settings ast ON ast.id = r.settings_id
          ORDER BY ${order}`,
        { replacements: repl, type: QueryTypes.SELECT },
      ),
    ]);
    return {
      total: Number(countRows[0]?.n ?? 0),
      rows: rows.map((r) => ({
        id: Number(r.id),
        title: (r.title as string | null) ?? null,
        fileName: (r.original_name as string | null) ?? null,
        sizeBytes: num(r.size_bytes),
        shiftId: Number(r.shift_id),
        shiftTitle: (r.shift_title as string | null) ?? null,
        target: (r.target as string | null) ?? null,
        wavelengthNm: num(r.wavelength_nm),
        experimentKind: (r.experiment_kind as string | null) ?? null,
        stepQuantity: (r.step_quantity as string | null) ?? null,
        nSteps: num(r.n_steps),
        nY: num(r.n_y),
        nX: num(r.n_x),
        status: r.status as ScanStatus,
        statusMessage: (r.status_message as string | null) ?? null,
        flagged: !!Number(r.flagged),
        startedAt: iso(r.started_at as string | null),
        uploadedAt: iso(r.created_at as string | null),
        offsetDeg: q.metadataOnly ? null : num(r.offset_deg),
        offsetErrDeg: q.metadataOnly ? null : num(r.offset_err_deg),
        latestResultId: q.metadataOnly ? null : num(r.latest_result_id),
        calibrationVersion: q.metadataOnly ? null : num(r.cal_version),
        settingsVersion: q.metadataOnly ? null : num(r.set_version),
      })),
    };
  });
}

/** Targets present in a campaign's scans (for the filter menu). */
export async function listCampaignTargets({ campaignId }: { campaignId: number }): Promise<string[]> {
  return guard('listCampaignTargets', async () => {
    const rows = await getDb().query<{ target: string }>(
      'SELECT DISTINCT target FROM scans WHERE campaign_id = ? AND target IS NOT NULL ORDER BY target',
      { replacements: [campaignId], type: QueryTypes.SELECT },
    );
    return rows.map((r) => r.target);
  });
}

// ONE SCAN //

export interface ResultSummaryDto {
  id: number;
  calibrationId: number;
  calibrationVersion: number | null;
  settingsId: number;
  settingsVersion: number | null;
  offsetDeg: number | null;
  offsetErrDeg: number | null;
  warningsCount: number;
  hasResultFile: boolean;
  createdAt: string | null;
  /** The scan's current result: the newest one whose calibration and settings were both approved. */
  isLatest: boolean;
  /** Computed with a calibration or settings version that was never approved (kept apart, not in the trend). */
  trial: boolean;
}

export interface JobDto {
  id: number;
  status: string;
  progress: number;
  /** A large event file reduced as chunk jobs: chunks stored so far and in all (null for a single job). */
  chunksDone: number | null;
  chunksTotal: number | null;
  attempts: number;
  errorMessage: string | null;
  calibrationId: number;
  settingsId: number;
  batchId: number | null;
  createdAt: string | null;
  startedAt: string | null;
  finishedAt: string | null;
}

export interface ScanDetailDto {
  scan: ScanRowDto & {
    teamId: number;
    campaignId: number;
    campaignName: string;
    sha256: string | null;
    rawFileStatus: string | null;
    /** The raw file's id and where its bytes are (issue 14: an archived file must be restored before reducing). */
    rawFileId: number | null;
    rawFileArchiveState: 'online' | 'archiving' | 'archived' | 'restoring' | null;
    quarantineReasons: string[] | null;
    flagNote: string | null;
    ellipticity: number | null;
    helicity: number | null;
    metadata: unknown;
  };
  results: ResultSummaryDto[];
  jobs: JobDto[];
}

/** The team that owns a scan (for the access check), or 404. */
export async function getScanTeamId({ scanId }: { scanId: number }): Promise<number> {
  return guard('getScanTeamId', async () => {
    const s = await Scan.findByPk(scanId, { attributes: ['team_id'] });
    if (!s) throw new AppError('not_found:scan');
    return s.team_id;
  });
}

/** A scan with its file, its results (newest first) and its latest jobs. */
export async function getScanDetail({ scanId }: { scanId: number }): Promise<ScanDetailDto> {
  return guard('getScanDetail', async () => {
    const s = await Scan.findByPk(scanId);
    if (!s) throw new AppError('not_found:scan');
    const [file, shift, campaign, results, jobs] = await Promise.all([
      RawFile.findByPk(s.raw_file_id),
      Shift.findByPk(s.shift_id, { attributes: ['title'] }),
      Campaign.findByPk(s.campaign_id, { attributes: ['name'] }),
      ScanResult.findAll({
        where: { scan_id: s.id },
        attributes: [
          'id',
          'calibration_id',
          'settings_id',
          'offset_deg',
          'offset_err_deg',
          'warnings_count',
          'derived_key',
          'created_at',
        ],
        order: [['id', 'DESC']],
      }),
      ReductionJob.findAll({ where: { scan_id: s.id }, order: [['id', 'DESC']], limit: 10 }),
    ]);
    const calIds = [...new Set(results.map((r) => r.calibration_id))];
    const setIds = [...new Set(results.map((r) => r.settings_id))];
    const [cals, sets] = await Promise.all([
      calIds.length
        ? DetectorCalibrationVersion.findAll({
            where: { id: { [Op.in]: calIds } },
            attributes: ['id', 'version', 'approved_at'],
          })
        : [],
      setIds.length
        ? AnalysisSettingsVersion.findAll({
            where: { id: { [Op.in]: setIds } },
            attributes: ['id', 'version', 'approved_at'],
          })
        : [],
    ]);
    const calV = new Map(cals.map((c) => [c.id, c.version]));
    const setV = new Map(sets.map((c) => [c.id, c.version]));
    const approved = new Set([
      ...cals.filter((c) => c.approved_at != null).map((c) => `c${c.id}`),
      ...sets.filter((c) => c.approved_at != null).map((c) => `s${c.id}`),
    ]);
    const isTrial = (r: { calibration_id: number; settings_id: number }) =>
      !approved.has(`c${r.calibration_id}`) || !approved.has(`s${r.settings_id}`);
    // results are newest first: the current one is the newest with an approved pair
    const latest = results.find((r) => !isTrial(r));
    return {
      scan: {
        id: s.id,
        teamId: s.team_id,
        campaignId: s.campaign_id,
        campaignName: campaign?.name ?? '',
        title: s.title,
        fileName: file?.original_name ?? null,
        sizeBytes: file ? Number(file.size_bytes) : null,
        sha256: file?.sha256 ?? null,
        rawFileStatus: file?.status ?? null,
        rawFileId: file?.id ?? null,
        rawFileArchiveState: file?.archive_state ?? null,
        quarantineReasons: file?.quarantine_reasons ?? null,
        shiftId: s.shift_id,
        shiftTitle: shift?.title ?? null,
        target: s.target,
        wavelengthNm: s.wavelength_nm,
        experimentKind: s.experiment_kind,
        stepQuantity: s.step_quantity,
        nSteps: s.n_steps,
        nY: s.n_y,
        nX: s.n_x,
        status: s.status,
        statusMessage: s.status_message,
        flagged: !!s.flagged,
        flagNote: s.flag_note,
        ellipticity: s.ellipticity,
        helicity: s.helicity,
        startedAt: iso(s.started_at),
        uploadedAt: iso(s.created_at),
        offsetDeg: latest?.offset_deg ?? null,
        offsetErrDeg: latest?.offset_err_deg ?? null,
        latestResultId: latest?.id ?? null,
        calibrationVersion: latest ? (calV.get(latest.calibration_id) ?? null) : null,
        settingsVersion: latest ? (setV.get(latest.settings_id) ?? null) : null,
        metadata: file?.metadata ?? null,
      },
      results: results.map((r) => ({
        id: r.id,
        calibrationId: r.calibration_id,
        calibrationVersion: calV.get(r.calibration_id) ?? null,
        settingsId: r.settings_id,
        settingsVersion: setV.get(r.settings_id) ?? null,
        offsetDeg: r.offset_deg,
        offsetErrDeg: r.offset_err_deg,
        warningsCount: r.warnings_count,
        hasResultFile: !!r.derived_key,
        createdAt: iso(r.created_at),
        isLatest: r.id === latest?.id,
        trial: isTrial(r),
      })),
      jobs: jobs.map((j) => ({
        id: j.id,
        status: j.status,
        progress: j.progress,
        chunksDone: j.chunks_total == null ? null : (j.chunks_done ?? 0),
        chunksTotal: j.chunks_total ?? null,
        attempts: j.attempts,
        errorMessage: j.error_message,
        calibrationId: j.calibration_id,
        settingsId: j.settings_id,
        batchId: j.batch_id,
        createdAt: iso(j.created_at),
        startedAt: iso(j.started_at),
        finishedAt: iso(j.finished_at),
      })),
    };
  });
}

export interface ResultDto {
  id: number;
  scanId: number;
  calibrationId: number;
  settingsId: number;
  calibrationVersion: number | null;
  settingsVersion: number | null;
  createdAt: string | null;
  derivedBucket: string | null;
  derivedKey: string | null;
  result: LobelineResult;
}

/** A result of a scan (the current, approved one when `resultId` is not given); 404 when none or another scan's. */
export async function getScanResult({ scanId, resultId }: { scanId: number; resultId?: number }): Promise<ResultDto> {
  return guard('getScanResult', async () => {
    const s = await Scan.findByPk(scanId, { attributes: ['id'] });
    if (!s) throw new AppError('not_found:scan');
    let id = resultId ?? null;
    if (id == null) {
      const rows = await getDb().query<{ id: number | null }>(
        `SELECT ${currentResultSql('s')} AS id FROM scans s WHERE s.id = ?`,
        {
          replacements: [scanId],
          type: QueryTypes.SELECT,
        },
      );
      id = rows[0]?.id == null ? null : Number(rows[0].id);
    }
    if (id == null) {
      const any = await ScanResult.count({ where: { scan_id: scanId } });
      throw new AppError('not_found:reduction', {
        message: any
          ? 'This scan has only trial results (from a calibration or settings version not approved); choose one of them.'
          : 'This scan has no result yet.',
      });
    }
    const r = await ScanResult.findByPk(id);
    if (!r || r.scan_id !== scanId)
      throw new AppError('not_found:reduction', { message: 'There is no such result of this scan.' });
    const [cal, set] = await Promise.all([
      DetectorCalibrationVersion.findByPk(r.calibration_id, { attributes: ['version'] }),
      AnalysisSettingsVersion.findByPk(r.settings_id, { attributes: ['version'] }),
    ]);
    const result = (typeof r.result_json === 'string' ? JSON.parse(r.result_json) : r.result_json) as LobelineResult;
    return {
      id: r.id,
      scanId: r.scan_id,
      calibrationId: r.calibration_id,
      settingsId: r.settings_id,
      calibrationVersion: cal?.version ?? null,
      settingsVersion: set?.version ?? null,
      createdAt: iso(r.created_at),
      derivedBucket: r.derived_bucket,
      derivedKey: r.derived_key,
      result,
    };
  });
}

// TRENDS //

export interface TrendPointDto {
  scanId: number;
  scanTitle: string | null;
  resultId: number;
  stepIndex: number;
  value: number | null;
  stepQuantity: string | null;
  offsetDeg: number | null;
  offsetErrDeg: number | null;
  radiusAu: number | null;
  radiusErrAu: number | null;
  intensityWcm2: number | null;
  intensityErrWcm2: number | null;
  transverseShiftAu: number | null;
  flagged: boolean;
}

/** Per-step headline numbers of the current (approved) result of every scan of a campaign (flagged marked). */
export async function getCampaignTrend({ campaignId }: { campaignId: number }): Promise<TrendPointDto[]> {
  return guard('getCampaignTrend', async () => {
    const rows = await getDb().query<Record<string, unknown>>(
      `SELECT s.id AS scan_id, s.title, s.step_quantity, s.flagged, st.result_id, st.step_index, st.value,
              st.offset_deg, st.offset_err_deg, st.radius_au, st.radius_err_au, st.intensity_wcm2,
              st.intensity_err_wcm2, st.transverse_shift_au
         FROM scans s
         JOIN scan_result_steps st ON st.result_id = ${currentResultSql('s')}
        WHERE s.campaign_id = ? AND s.status = 'reduced' AND ${firstOfItsFile('s')}
        ORDER BY s.id, st.step_index
        LIMIT 20000`,
      { replacements: [campaignId], type: QueryTypes.SELECT },
    );
    return rows.map((r) => ({
      scanId: Number(r.scan_id),
      scanTitle: (r.title as string | null) ?? null,
      resultId: Number(r.result_id),
      stepIndex: Number(r.step_index),
      value: num(r.value),
      stepQuantity: (r.step_quantity as string | null) ?? null,
      offsetDeg: num(r.offset_deg),
      offsetErrDeg: num(r.offset_err_deg),
      radiusAu: num(r.radius_au),
      radiusErrAu: num(r.radius_err_au),
      intensityWcm2: num(r.intensity_wcm2),
      intensityErrWcm2: num(r.intensity_err_wcm2),
      transverseShiftAu: num(r.transverse_shift_au),
      flagged: !!Number(r.flagged),
    }));
  });
}

// BATCHES //

export interface BatchDto {
  id: number;
  calibrationId: number;
  settingsId: number;
  calibrationVersion: number | null;
  settingsVersion: number | null;
  total: number;
  queued: number;
  running: number;
  succeeded: number;
  failed: number;
  createdAt: string | null;
}

/** The campaign's latest re-reduction batches with the state of their jobs. */
export async function listBatches({
  campaignId,
  limit = 5,
}: {
  campaignId: number;
  limit?: number;
}): Promise<BatchDto[]> {
  return guard('listBatches', async () => {
    const batches = await ReductionBatch.findAll({
      where: { campaign_id: campaignId },
      order: [['id', 'DESC']],
      limit,
    });
    if (!batches.length) return [];
    const ids = batches.map((b) => b.id);
    const counts = await getDb().query<{ batch_id: number; status: string; n: number }>(
      'SELECT batch_id, status, COUNT(*) AS n FROM reduction_jobs WHERE batch_id IN (:ids) GROUP BY batch_id, status',
      { replacements: { ids }, type: QueryTypes.SELECT },
    );
    const [cals, sets] = await Promise.all([
      DetectorCalibrationVersion.findAll({
        where: { id: { [Op.in]: batches.map((b) => b.calibration_id) } },
        attributes: ['id', 'version'],
      }),
      AnalysisSettingsVersion.findAll({
        where: { id: { [Op.in]: batches.map((b) => b.settings_id) } },
        attributes: ['id', 'version'],
      }),
    ]);
    const calV = new Map(cals.map((c) => [c.id, c.version]));
    const setV = new Map(sets.map((c) => [c.id, c.version]));
    return batches.map((b) => {
      const by = (status: string) =>
        Number(counts.find((c) => Number(c.batch_id) === b.id && c.status === status)?.n ?? 0);
      return {
        id: b.id,
        calibrationId: b.calibration_id,
        settingsId: b.settings_id,
        calibrationVersion: calV.get(b.calibration_id) ?? null,
        settingsVersion: setV.get(b.settings_id) ?? null,
        total: b.total,
        queued: by('queued'),
        running: by('running'),
        succeeded: by('succeeded'),
        failed: by('failed'),
        createdAt: iso(b.created_at),
      };
    });
  });
}

/** Ids of a campaign's scans that can be reduced (not quarantined). */
export async function listReducibleScanIds({ campaignId }: { campaignId: number }): Promise<number[]> {
  return guard('listReducibleScanIds', async () => {
    const rows = await getDb().query<{ id: number }>(
      `SELECT s.id FROM scans s WHERE s.campaign_id = ? AND s.status <> 'quarantined' AND ${firstOfItsFile('s')}
        ORDER BY s.id`,
      { replacements: [campaignId], type: QueryTypes.SELECT },
    );
    return rows.map((r) => Number(r.id));
  });
}

/** Creates a batch row for a campaign re-reduction. */
export async function createBatch({
  campaignId,
  calibrationId,
  settingsId,
  requestedBy,
  total,
}: {
  campaignId: number;
  calibrationId: number;
  settingsId: number;
  requestedBy: number;
  total: number;
}): Promise<number> {
  return guard('createBatch', async () => {
    const b = await ReductionBatch.create({
      campaign_id: campaignId,
      calibration_id: calibrationId,
      settings_id: settingsId,
      requested_by: requestedBy,
      total,
    });
    return b.id;
  });
}
