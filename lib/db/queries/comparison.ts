import 'server-only';
// Campaign comparison (issue 13, PRODUCT.md C8): the step points of the current results of a selection of campaigns
// and scans, with what made each one (result, calibration and settings versions, software, stated intensity
// convention); the campaigns a user may compare; saved comparisons. Access is decided by the callers
// (lib/comparison/points.ts, the route handlers) through lib/policy.ts.
import { randomBytes } from 'node:crypto';
import { QueryTypes } from 'sequelize';
import { getDb } from '@/lib/db';
import { AppError } from '@/lib/errors';
import { Campaign, SavedComparison, Scan, Team } from '@/models';
import { currentResultSql, firstOfItsFile } from './scans';

// HELPERS //

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

/** JSON_EXTRACT answers JSON text (or already-parsed values, depending on the driver). */
function jsonValue(v: unknown): unknown {
  if (typeof v !== 'string') return v ?? null;
  try {
    return JSON.parse(v);
  } catch {
    return v;
  }
}

// OWNERS //

/** Team of each campaign id that exists (missing ids are absent from the map). */
export async function campaignTeams(ids: number[]): Promise<Map<number, number>> {
  if (!ids.length) return new Map();
  return guard('campaignTeams', async () => {
    const rows = await Campaign.findAll({ where: { id: ids }, attributes: ['id', 'team_id'] });
    return new Map(rows.map((r) => [r.id, r.team_id]));
  });
}

/** Team of each scan id that exists. */
export async function scanTeams(ids: number[]): Promise<Map<number, number>> {
  if (!ids.length) return new Map();
  return guard('scanTeams', async () => {
    const rows = await Scan.findAll({ where: { id: ids }, attributes: ['id', 'team_id'] });
    return new Map(rows.map((r) => [r.id, r.team_id]));
  });
}

// STEP POINTS //

export interface RawComparisonRow {
  campaignId: number;
  campaignName: string;
  teamId: number;
  teamName: string;
  scanId: number;
  scanTitle: string | null;
  experimentKind: string | null;
  target: string | null;
  wavelengthNm: number | null;
  ellipticity: number | null;
  helicity: number | null;
  fieldRatio: number | null;
  flagged: boolean;
  stepQuantity: string | null;
  stepUnits: string | null;
  statedConvention: string;
  resultId: number;
  calibrationId: number;
  calibrationVersion: number | null;
  settingsId: number;
  settingsVersion: number | null;
  softwareVersion: string;
  stepIndex: number;
  value: number | null;
  offsetDeg: number | null;
  offsetErrDeg: number | null;
  offsetSysErrDeg: number | null;
  transverseShiftAu: number | null;
  radiusAu: number | null;
  radiusErrAu: number | null;
  intensityWcm2: number | null;
  intensityErrWcm2: number | null;
}

/**
 * Per-step numbers of the current (approved) result of every reduced scan in the campaigns `campaignIds` and of the
 * scans `scanIds` (a file sent twice into one campaign counts once), ordered by campaign, scan and step; at most
 * `limit` + 1 rows so the caller can tell that it cut.
 */
export async function comparisonRows({
  campaignIds,
  scanIds,
  limit,
}: {
  campaignIds: number[];
  scanIds: number[];
  limit: number;
}): Promise<RawComparisonRow[]> {
  if (!campaignIds.length && !scanIds.length) return [];
  return guard('comparisonRows', async () => {
    const where: string[] = [];
    if (campaignIds.length) where.push('s.campaign_id IN (:campaignIds)');
    if (scanIds.length) where.push('s.id IN (:scanIds)');
    const rows = await getDb().query<Record<string, unknown>>(
      `SELECT c.id AS campaign_id, c.name AS campaign_name, t.id AS team_id, t.name AS team_name,
              s.id AS scan_id, s.title, s.experiment_kind, s.target, s.wavelength_nm, s.ellipticity, s.helicity,
              s.flagged, s.step_quantity,
              JSON_EXTRACT(r.result_json, '$.input.field_ratio') AS field_ratio,
              JSON_EXTRACT(r.result_json, '$.input.step_units') AS step_units,
              COALESCE(JSON_EXTRACT(rf.metadata_override, '$.intensityConvention'),
                       JSON_EXTRACT(rf.metadata, '$.intensityConvention')) AS stated_convention,
              JSON_EXTRACT(r.result_json, '$.steps[*].index') AS step_indices,
              JSON_EXTRACT(r.result_json, '$.steps[*].offset_sys_err_deg') AS step_sys,
              r.id AS result_id, r.calibration_id, cc.version AS calibration_version, r.settings_id,
              cs.version AS settings_version, r.software_version,
              st.step_index, st.value, st.offset_deg, st.offset_err_deg, st.transverse_shift_au, st.radius_au,
              st.radius_err_au, st.intensity_wcm2, st.intensity_err_wcm2
         FROM scans s
         JOIN campaigns c ON c.id = s.campaign_id
         JOIN teams t ON t.id = s.team_id
         JOIN raw_files rf ON rf.id = s.raw_file_id
         JOIN scan_results r ON r.id = ${currentResultSql('s')}
         JOIN detector_calibrations cc ON cc.id = r.calibration_id
         JOIN analysis_settings cs ON cs.id = r.settings_id
         JOIN scan_result_steps st ON st.result_id = r.id
        WHERE (${where.join(' OR ')}) AND s.status = 'reduced' AND ${firstOfItsFile('s')}
        ORDER BY c.id, s.id, st.step_index
        LIMIT ${Math.max(1, Math.floor(limit)) + 1}`,
      { replacements: { campaignIds, scanIds }, type: QueryTypes.SELECT },
    );
    return rows.map((r) => {
      const indices = jsonValue(r.step_indices);
      const sys = jsonValue(r.step_sys);
      let offsetSysErrDeg: number | null = null;
      if (Array.isArray(indices) && Array.isArray(sys)) {
        const k = indices.findIndex((i) => Number(i) === Number(r.step_index));
        const v = k >= 0 ? sys[k] : null;
        offsetSysErrDeg = typeof v === 'number' && Number.isFinite(v) ? v : null;
      }
      const fr = jsonValue(r.field_ratio);
      const units = jsonValue(r.step_units);
      const conv = jsonValue(r.stated_convention);
      return {
        campaignId: Number(r.campaign_id),
        campaignName: String(r.campaign_name),
        teamId: Number(r.team_id),
        teamName: String(r.team_name),
        scanId: Number(r.scan_id),
        scanTitle: (r.title as string | null) ?? null,
        experimentKind: (r.experiment_kind as string | null) ?? null,
        target: (r.target as string | null) ?? null,
        wavelengthNm: num(r.wavelength_nm),
        ellipticity: num(r.ellipticity),
        helicity: num(r.helicity),
        fieldRatio: typeof fr === 'number' ? fr : null,
        flagged: !!Number(r.flagged),
        stepQuantity: (r.step_quantity as string | null) ?? null,
        stepUnits: typeof units === 'string' ? units : null,
        statedConvention: typeof conv === 'string' && conv ? conv : 'cycle_averaged_total',
        resultId: Number(r.result_id),
        calibrationId: Number(r.calibration_id),
        calibrationVersion: num(r.calibration_version),
        settingsId: Number(r.settings_id),
        settingsVersion: num(r.settings_version),
        softwareVersion: String(r.software_version),
        stepIndex: Number(r.step_index),
        value: num(r.value),
        offsetDeg: num(r.offset_deg),
        offsetErrDeg: num(r.offset_err_deg),
        offsetSysErrDeg,
        transverseShiftAu: num(r.transverse_shift_au),
        radiusAu: num(r.radius_au),
        radiusErrAu: num(r.radius_err_au),
        intensityWcm2: num(r.intensity_wcm2),
        intensityErrWcm2: num(r.intensity_err_wcm2),
      };
    });
  });
}

// PHASE-DELAY CURVES //

export interface RawPhaseRow {
  campaignId: number;
  campaignName: string;
  teamId: number;
  teamName: string;
  scanId: number;
  scanTitle: string | null;
  experimentKind: string | null;
  target: string | null;
  wavelengthNm: number | null;
  ellipticity: number | null;
  flagged: boolean;
  resultId: number;
  calibrationId: number;
  calibrationVersion: number | null;
  settingsId: number;
  settingsVersion: number | null;
  softwareVersion: string;
  /** The result's phase analysis (FORMATS §4 `phase`), as stored. */
  phase: unknown;
}

/**
 * The phase analysis (yield against the ω–2ω relative phase per region) of the current result of every reduced scan
 * in the selection that has one (two-colour phase scans), at most `limit` scans.
 */
export async function comparisonPhaseRows({
  campaignIds,
  scanIds,
  limit,
}: {
  campaignIds: number[];
  scanIds: number[];
  limit: number;
}): Promise<RawPhaseRow[]> {
  if (!campaignIds.length && !scanIds.length) return [];
  return guard('comparisonPhaseRows', async () => {
    const where: string[] = [];
    if (campaignIds.length) where.push('s.campaign_id IN (:campaignIds)');
    if (scanIds.length) where.push('s.id IN (:scanIds)');
    const rows = await getDb().query<Record<string, unknown>>(
      `SELECT c.id AS campaign_id, c.name AS campaign_name, t.id AS team_id, t.name AS team_name,
              s.id AS scan_id, s.title, s.experiment_kind, s.target, s.wavelength_nm, s.ellipticity, s.flagged,
              r.id AS result_id, r.calibration_id, cc.version AS calibration_version, r.settings_id,
              cs.version AS settings_version, r.software_version,
              JSON_EXTRACT(r.result_json, '$.phase') AS phase
         FROM scans s
         JOIN campaigns c ON c.id = s.campaign_id
         JOIN teams t ON t.id = s.team_id
         JOIN scan_results r ON r.id = ${currentResultSql('s')}
         JOIN detector_calibrations cc ON cc.id = r.calibration_id
         JOIN analysis_settings cs ON cs.id = r.settings_id
        WHERE (${where.join(' OR ')}) AND s.status = 'reduced' AND ${firstOfItsFile('s')}
          AND JSON_TYPE(JSON_EXTRACT(r.result_json, '$.phase')) = 'OBJECT'
        ORDER BY c.id, s.id
        LIMIT ${Math.max(1, Math.floor(limit))}`,
      { replacements: { campaignIds, scanIds }, type: QueryTypes.SELECT },
    );
    return rows.map((r) => ({
      campaignId: Number(r.campaign_id),
      campaignName: String(r.campaign_name),
      teamId: Number(r.team_id),
      teamName: String(r.team_name),
      scanId: Number(r.scan_id),
      scanTitle: (r.title as string | null) ?? null,
      experimentKind: (r.experiment_kind as string | null) ?? null,
      target: (r.target as string | null) ?? null,
      wavelengthNm: num(r.wavelength_nm),
      ellipticity: num(r.ellipticity),
      flagged: !!Number(r.flagged),
      resultId: Number(r.result_id),
      calibrationId: Number(r.calibration_id),
      calibrationVersion: num(r.calibration_version),
      settingsId: Number(r.settings_id),
      settingsVersion: num(r.settings_version),
      softwareVersion: String(r.software_version),
      phase: jsonValue(r.phase),
    }));
  });
}

// SOURCES //

export interface ComparisonSourceDto {
  id: number;
  teamId: number;
  teamName: string;
  name: string;
  target: string;
  wavelengthNm: number;
  experimentKind: string;
  /** Reduced scans with a current result (what a comparison can draw). */
  scans: { id: number; title: string | null; ellipticity: number | null; stepQuantity: string | null }[];
}

/** The campaigns of `teamIds` with their reduced scans that have a current result. */
export async function comparisonSources({ teamIds }: { teamIds: number[] }): Promise<ComparisonSourceDto[]> {
  if (!teamIds.length) return [];
  return guard('comparisonSources', async () => {
    const [campaigns, teams, scans] = await Promise.all([
      Campaign.findAll({ where: { team_id: teamIds }, order: [['name', 'ASC']] }),
      Team.findAll({ where: { id: teamIds }, attributes: ['id', 'name'] }),
      getDb().query<Record<string, unknown>>(
        `SELECT s.id, s.campaign_id, s.title, s.ellipticity, s.step_quantity FROM scans s
          WHERE s.team_id IN (:teamIds) AND s.status = 'reduced' AND ${firstOfItsFile('s')}
            AND ${currentResultSql('s')} IS NOT NULL
          ORDER BY s.id LIMIT 5000`,
        { replacements: { teamIds }, type: QueryTypes.SELECT },
      ),
    ]);
    const teamName = new Map(teams.map((t) => [t.id, t.name]));
    return campaigns.map((c) => ({
      id: c.id,
      teamId: c.team_id,
      teamName: teamName.get(c.team_id) ?? '',
      name: c.name,
      target: c.target,
      wavelengthNm: Number(c.wavelength_nm),
      experimentKind: c.experiment_kind,
      scans: scans
        .filter((s) => Number(s.campaign_id) === c.id)
        .map((s) => ({
          id: Number(s.id),
          title: (s.title as string | null) ?? null,
          ellipticity: num(s.ellipticity),
          stepQuantity: (s.step_quantity as string | null) ?? null,
        })),
    }));
  });
}

// SAVED COMPARISONS //

export interface SavedComparisonDto {
  id: string;
  teamId: number;
  teamName: string;
  title: string;
  note: string | null;
  spec: unknown;
  createdBy: { id: number; name: string } | null;
  createdAt: string | null;
  updatedAt: string | null;
}

function newSlug(): string {
  const alphabet = 'abcdefghijklmnopqrstuvwxyz0123456789';
  const bytes = randomBytes(12);
  let out = '';
  for (const b of bytes) out += alphabet[b % alphabet.length];
  return out;
}

async function toDto(row: SavedComparison): Promise<SavedComparisonDto> {
  const db = getDb();
  const [team, user] = await Promise.all([
    Team.findByPk(row.team_id, { attributes: ['name'] }),
    row.created_by
      ? db.query<{ id: number; name: string }>('SELECT id, name FROM users WHERE id = ?', {
          replacements: [row.created_by],
          type: QueryTypes.SELECT,
        })
      : Promise.resolve([]),
  ]);
  return {
    id: row.slug,
    teamId: row.team_id,
    teamName: team?.name ?? '',
    title: row.title,
    note: row.note ?? null,
    spec: row.spec,
    createdBy: user[0] ? { id: Number(user[0].id), name: String(user[0].name) } : null,
    createdAt: row.created_at ? new Date(row.created_at).toISOString() : null,
    updatedAt: row.updated_at ? new Date(row.updated_at).toISOString() : null,
  };
}

export async function createSavedComparison(input: {
  teamId: number;
  title: string;
  note: string | null;
  spec: Record<string, unknown>;
  userId: number;
}): Promise<SavedComparisonDto> {
  return guard('createSavedComparison', async () => {
    const row = await SavedComparison.create({
      team_id: input.teamId,
      slug: newSlug(),
      title: input.title,
      note: input.note,
      spec: input.spec,
      created_by: input.userId,
    });
    return toDto(row);
  });
}

/** The saved comparison with this public id, or 404. */
export async function getSavedComparison({ slug }: { slug: string }): Promise<SavedComparisonDto> {
  return guard('getSavedComparison', async () => {
    const row = await SavedComparison.findOne({ where: { slug } });
    if (!row) throw new AppError('not_found:comparison');
    return toDto(row);
  });
}

export async function listSavedComparisons({ teamIds }: { teamIds: number[] }): Promise<SavedComparisonDto[]> {
  if (!teamIds.length) return [];
  return guard('listSavedComparisons', async () => {
    const rows = await SavedComparison.findAll({
      where: { team_id: teamIds },
      order: [['updated_at', 'DESC']],
      limit: 200,
    });
    return Promise.all(rows.map(toDto));
  });
}

export async function deleteSavedComparison({ slug }: { slug: string }): Promise<void> {
  return guard('deleteSavedComparison', async () => {
    await SavedComparison.destroy({ where: { slug } });
  });
}
