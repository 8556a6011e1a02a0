import 'server-only';
// The points of a comparison (issue 13): access per campaign and per scan through lib/policy.ts, the current results'
// step numbers with their provenance, filters, and intensity conventions made one (SCIENCE.md §1.2, C5) — converted
// when the caller names the convention, refused with a sentence when the selection mixes conventions and none was
// named or when a conversion is not defined for a scan.
import {
  campaignTeams,
  comparisonPhaseRows,
  comparisonRows,
  type RawComparisonRow,
  type RawPhaseRow,
  scanTeams,
} from '@/lib/db/queries/comparison';
import { AppError } from '@/lib/errors';
import { type Actor, authorizeObject, can } from '@/lib/policy';
import {
  CONVENTION_WORDS,
  conventionFactor,
  type IntensityConventionName,
  isConventionName,
} from '@/reduction/intensity-conventions';
import { type ComparisonPoint, MAX_POINTS, type PhaseCurve, type PointsAnswer, type PointsQuery } from './spec';

// ACCESS //

export interface SelectionAccess {
  /** Ids the actor may read. */
  campaignIds: number[];
  scanIds: number[];
  /** Ids that are gone or that the actor may not read (listed as hidden, never an error). */
  hiddenCampaignIds: number[];
  hiddenScanIds: number[];
}

/** Which parts of a selection the actor may read results of (for opening a saved comparison). */
export async function selectionAccess(
  actor: Actor,
  selection: { campaignIds: number[]; scanIds: number[] },
): Promise<SelectionAccess> {
  const [cTeams, sTeams] = await Promise.all([campaignTeams(selection.campaignIds), scanTeams(selection.scanIds)]);
  const readable = (teamId: number | undefined) => teamId !== undefined && can(actor, 'result.view', { teamId });
  return {
    campaignIds: selection.campaignIds.filter((id) => readable(cTeams.get(id))),
    scanIds: selection.scanIds.filter((id) => readable(sTeams.get(id))),
    hiddenCampaignIds: selection.campaignIds.filter((id) => !readable(cTeams.get(id))),
    hiddenScanIds: selection.scanIds.filter((id) => !readable(sTeams.get(id))),
  };
}

/**
 * Throws unless the actor may read the results of every campaign and scan asked for: 404 for an id that does not
 * exist or belongs to a team the actor may not see, 403 where the object is visible but its results are not (the
 * steward), exactly as the campaign and scan routes answer.
 */
export async function authorizeSelection(actor: Actor, q: { campaigns: number[]; scans: number[] }): Promise<void> {
  const [cTeams, sTeams] = await Promise.all([campaignTeams(q.campaigns), scanTeams(q.scans)]);
  for (const id of q.campaigns) {
    const teamId = cTeams.get(id);
    if (teamId === undefined)
      throw new AppError('not_found:campaign', { details: [`campaigns: ${id} was not found.`] });
    authorizeObject(actor, 'result.view', { teamId, surface: 'campaign' });
  }
  for (const id of q.scans) {
    const teamId = sTeams.get(id);
    if (teamId === undefined) throw new AppError('not_found:scan', { details: [`scans: ${id} was not found.`] });
    authorizeObject(actor, 'result.view', { teamId, surface: 'scan' });
  }
}

// POINTS //

const near = (a: number | null, list: number[], tol: number) =>
  a !== null && list.some((b) => Math.abs(a - b) <= tol * Math.max(1, Math.abs(b)));

type Filterable = Pick<RawComparisonRow, 'flagged' | 'target' | 'wavelengthNm' | 'ellipticity' | 'calibrationId'>;

function passes(r: Filterable, q: PointsQuery): boolean {
  if (q.flagged === 'exclude' && r.flagged) return false;
  if (q.targets.length && !q.targets.some((t) => t.toLowerCase() === (r.target ?? '').toLowerCase())) return false;
  if (q.wavelengths.length && !near(r.wavelengthNm, q.wavelengths, 0.005)) return false;
  if (
    q.ellipticities.length &&
    !(r.ellipticity !== null && q.ellipticities.some((e) => Math.abs(e - r.ellipticity!) <= 0.005))
  )
    return false;
  if (q.calibrations.length && !q.calibrations.includes(r.calibrationId)) return false;
  return true;
}

/** Whether a step carries an intensity whose meaning depends on the convention. */
function hasIntensity(r: RawComparisonRow): boolean {
  return (r.stepQuantity === 'intensity' && r.value !== null) || r.intensityWcm2 !== null;
}

function scanLabel(r: RawComparisonRow): string {
  return `“${r.scanTitle ?? `scan ${r.scanId}`}” (${r.campaignName})`;
}

function listScans(labels: string[]): string {
  const shown = labels.slice(0, 3).join(', ');
  return labels.length > 3 ? `${shown} and ${labels.length - 3} more` : shown;
}

/**
 * Step points of the selection, after the access check (call {@link authorizeSelection} first, or pass only the
 * readable ids of {@link selectionAccess}).
 */
export async function comparisonPoints(q: PointsQuery): Promise<PointsAnswer> {
  const raw = await comparisonRows({ campaignIds: q.campaigns, scanIds: q.scans, limit: MAX_POINTS });
  // the query answers one row more than the limit when there are more: then the answer says it was cut
  const truncated = raw.length > MAX_POINTS;
  const kept = raw.slice(0, MAX_POINTS).filter((r) => passes(r, q));
  // one row per (scan, step): a scan picked both on its own and through its campaign is drawn once
  const seen = new Set<string>();
  const unique = kept.filter((r) => {
    const key = `${r.scanId}:${r.stepIndex}`;
    if (seen.has(key)) return false;
    seen.add(key);
    return true;
  });

  // only steps that carry an intensity (a stated intensity step, or one from the lobe radius) depend on a convention
  const withIntensity = unique.filter(hasIntensity);
  const unknown = withIntensity.filter((r) => !isConventionName(r.statedConvention));
  if (unknown.length) {
    throw new AppError('conflict:comparison', {
      message: `Lobeline does not know the intensity convention “${unknown[0]!.statedConvention}” stated by ${listScans([...new Set(unknown.map(scanLabel))])}, so their intensities cannot be compared.`,
    });
  }
  const stated = [...new Set(withIntensity.map((r) => r.statedConvention as IntensityConventionName))];
  let target: IntensityConventionName;
  if (q.convention) target = q.convention;
  else if (stated.length <= 1) target = stated[0] ?? 'cycle_averaged_total';
  else {
    const parts = stated.map((c) => {
      const labels = [...new Set(withIntensity.filter((r) => r.statedConvention === c).map(scanLabel))];
      return `${CONVENTION_WORDS[c]} for ${listScans(labels)}`;
    });
    throw new AppError('conflict:comparison', {
      message: `These scans state their intensities in different conventions (${parts.join('; ')}). Choose one convention to convert them to (SCIENCE.md §1.2), or compare scans of one convention.`,
      details: stated.map((c) => `convention: ${c} is used by some of the chosen scans.`),
    });
  }

  const conversions = new Map<string, { labels: Set<string>; factors: Set<string> }>();
  const refusals: string[] = [];
  const points: ComparisonPoint[] = [];
  for (const r of unique) {
    const from = (isConventionName(r.statedConvention) ? r.statedConvention : target) as IntensityConventionName;
    const f: ReturnType<typeof conventionFactor> = hasIntensity(r)
      ? conventionFactor(from, target, { kind: r.experimentKind, ellipticity: r.ellipticity, fieldRatio: r.fieldRatio })
      : { ok: true, factor: 1 };
    if (!f.ok) {
      refusals.push(`${scanLabel(r)}: ${f.reason}`);
      continue;
    }
    if (hasIntensity(r) && from !== target) {
      const k = `${from}→${target}`;
      const entry = conversions.get(k) ?? { labels: new Set(), factors: new Set() };
      entry.labels.add(scanLabel(r));
      entry.factors.add(f.factor.toPrecision(4));
      conversions.set(k, entry);
    }
    const scaled = (v: number | null) => (v === null ? null : v * f.factor);
    const stepIsIntensity = r.stepQuantity === 'intensity';
    points.push({
      campaignId: r.campaignId,
      campaignName: r.campaignName,
      teamId: r.teamId,
      teamName: r.teamName,
      scanId: r.scanId,
      scanTitle: r.scanTitle,
      stepIndex: r.stepIndex,
      experimentKind: r.experimentKind,
      target: r.target,
      wavelengthNm: r.wavelengthNm,
      ellipticity: r.ellipticity,
      helicity: r.helicity,
      fieldRatio: r.fieldRatio,
      flagged: r.flagged,
      stepQuantity: r.stepQuantity,
      stepUnits: r.stepUnits,
      stepValue: stepIsIntensity ? scaled(r.value) : r.value,
      offsetDeg: r.offsetDeg,
      offsetErrDeg: r.offsetErrDeg,
      offsetSysErrDeg: r.offsetSysErrDeg,
      transverseShiftAu: r.transverseShiftAu,
      radiusAu: r.radiusAu,
      radiusErrAu: r.radiusErrAu,
      radiusIntensityWcm2: scaled(r.intensityWcm2),
      radiusIntensityErrWcm2: scaled(r.intensityErrWcm2),
      provenance: {
        scanId: r.scanId,
        resultId: r.resultId,
        calibrationId: r.calibrationId,
        calibrationVersion: r.calibrationVersion,
        settingsId: r.settingsId,
        settingsVersion: r.settingsVersion,
        softwareVersion: r.softwareVersion,
        intensityConvention: target,
        statedConvention: r.statedConvention,
        conventionFactor: f.factor,
      },
    });
  }
  if (refusals.length) {
    const unique = [...new Set(refusals)];
    throw new AppError('conflict:comparison', {
      message: `The intensities of ${unique.length === 1 ? 'one scan' : `${unique.length} scans`} cannot be converted to the ${CONVENTION_WORDS[target]} convention: ${listScans(unique)}. Leave those scans out or compare in their own convention.`,
    });
  }
  const phaseRows = (await comparisonPhaseRows({ campaignIds: q.campaigns, scanIds: q.scans, limit: 500 })).filter(
    (r) => passes(r, q),
  );
  return {
    phaseCurves: phaseRows.flatMap(phaseCurvesOf),
    convention: target,
    conversions: [...conversions.entries()].map(([k, v]) => {
      const [from] = k.split('→') as [IntensityConventionName];
      return `Intensities of ${listScans([...v.labels])} were converted from ${CONVENTION_WORDS[from]} to ${CONVENTION_WORDS[target]} (factor ${[...v.factors].join(', ')}; SCIENCE.md §1.2).`;
    }),
    points,
    truncated,
  };
}

const finiteOrNull = (v: unknown): number | null => (typeof v === 'number' && Number.isFinite(v) ? v : null);

/** The regions of one stored phase analysis as curves (values that are not finite numbers are left out). */
function phaseCurvesOf(r: RawPhaseRow): PhaseCurve[] {
  const phase = r.phase as { method?: unknown; regions?: unknown } | null;
  if (!phase || !Array.isArray(phase.regions)) return [];
  return phase.regions.flatMap((region: Record<string, unknown>) => {
    const ph = Array.isArray(region.phase_rad) ? (region.phase_rad as unknown[]) : [];
    const y = Array.isArray(region.yield) ? (region.yield as unknown[]) : [];
    const pairs = ph
      .map((p, i) => [finiteOrNull(p), finiteOrNull(y[i])] as const)
      .filter((pair): pair is readonly [number, number] => pair[0] !== null && pair[1] !== null);
    if (!pairs.length) return [];
    return [
      {
        campaignId: r.campaignId,
        campaignName: r.campaignName,
        teamId: r.teamId,
        teamName: r.teamName,
        scanId: r.scanId,
        scanTitle: r.scanTitle,
        target: r.target,
        wavelengthNm: r.wavelengthNm,
        ellipticity: r.ellipticity,
        flagged: r.flagged,
        region: typeof region.name === 'string' ? region.name : 'region',
        method: typeof phase.method === 'string' ? phase.method : null,
        phaseRad: pairs.map((p) => p[0]),
        yield: pairs.map((p) => p[1]),
        a0: finiteOrNull(region.a0),
        a1: finiteOrNull(region.a1),
        phaseOfMaxRad: finiteOrNull(region.phase_of_max_rad),
        contrast: finiteOrNull(region.contrast),
        provenance: {
          scanId: r.scanId,
          resultId: r.resultId,
          calibrationId: r.calibrationId,
          calibrationVersion: r.calibrationVersion,
          settingsId: r.settingsId,
          settingsVersion: r.settingsVersion,
          softwareVersion: r.softwareVersion,
        },
      },
    ];
  });
}
