import 'server-only';
// Helicity-difference residuals of a campaign (SCIENCE.md §4.4, §9.2): the current result of every reduced,
// unflagged scan with a helicity of ±1, paired by matching conditions and step value (reduction/helicity.ts).
import { QueryTypes } from 'sequelize';
import { getDb } from '@/lib/db';
import { AppError } from '@/lib/errors';
import { type HelicityResidual, type HelicityStepInput, helicityResiduals } from '@/reduction/helicity';
import { currentResultSql, firstOfItsFile } from './scans';

export type HelicityResidualDto = HelicityResidual;

const num = (v: unknown): number | null => (v === null || v === undefined ? null : Number(v));

/** The helicity-difference residuals of a campaign's current results (empty without both helicities). */
export async function getCampaignHelicityResiduals({
  campaignId,
}: {
  campaignId: number;
}): Promise<HelicityResidualDto[]> {
  let rows: Record<string, unknown>[];
  try {
    rows = await getDb().query<Record<string, unknown>>(
      `SELECT s.id AS scan_id, s.experiment_kind, s.target, s.wavelength_nm, s.ellipticity, s.helicity,
              s.step_quantity, st.step_index, st.value, st.offset_deg, st.offset_err_deg
         FROM scans s
         JOIN scan_result_steps st ON st.result_id = ${currentResultSql('s')}
        WHERE s.campaign_id = ? AND s.status = 'reduced' AND s.flagged = 0 AND s.helicity IN (1, -1)
          AND st.offset_deg IS NOT NULL AND ${firstOfItsFile('s')}
        ORDER BY s.id, st.step_index
        LIMIT 20000`,
      { replacements: [campaignId], type: QueryTypes.SELECT },
    );
  } catch (err) {
    const unavailable = /Connection|Timeout|HostNotReachable/.test((err as Error)?.name ?? '');
    throw new AppError(unavailable ? 'unavailable:database' : 'internal:database', {
      cause: err,
      context: { what: 'getCampaignHelicityResiduals' },
    });
  }
  const steps: HelicityStepInput[] = rows.map((r) => ({
    scanId: Number(r.scan_id),
    stepIndex: Number(r.step_index),
    helicity: num(r.helicity),
    conditions: {
      experimentKind: (r.experiment_kind as string | null) ?? null,
      target: (r.target as string | null) ?? null,
      wavelengthNm: num(r.wavelength_nm),
      ellipticity: r.experiment_kind === 'angular_streaking' ? num(r.ellipticity) : null,
      stepQuantity: (r.step_quantity as string | null) ?? null,
    },
    value: num(r.value),
    offsetDeg: num(r.offset_deg),
    offsetErrDeg: num(r.offset_err_deg),
  }));
  return helicityResiduals(steps);
}
