// Helicity-difference residual of a campaign (GET /api/campaigns/[campaignId]/helicity; SCIENCE.md §4.4, §9.2)
// against the real MariaDB: the team's reduced scan (h = +1, the forward model of reduction/synth) is paired with a
// second scan of h = −1 at the same conditions whose current result has offsets 2° below it, so the residual must
// be ½·2° = 1° at each step and the mean 1° below the h = +1 offset (by hand). A flagged partner, or one without a
// current result of an approved pair, pairs with nothing. Access per role is in policy-matrix.test.ts.
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import type { World } from './helpers/world';

vi.mock('server-only', () => ({}));

const { callRoute } = await import('./helpers/call');
const { actAs, clearSession } = await import('./helpers/session');
const { makeWorld } = await import('./helpers/world');
const { closeSequelize } = await import('@/lib/db');
const { closeReductionQueue } = await import('@/lib/queue/reduction-queue');
const { closeS3Client } = await import('@/lib/storage/s3');
const { Scan, ScanResult, ScanResultStep } = await import('@/models');
const { GET } = await import('@/app/api/campaigns/[campaignId]/helicity/route');

let w: World;
beforeAll(async () => {
  w = await makeWorld({ data: true });
});
afterAll(async () => {
  clearSession();
  await w?.cleanup();
  await closeReductionQueue();
  closeS3Client();
  await closeSequelize();
});

type Residual = {
  value: number;
  plus: { offsetDeg: number; scanSteps: { scanId: number }[] };
  minus: { offsetDeg: number; scanSteps: { scanId: number }[] };
  meanOffsetDeg: number;
  residualDeg: number;
  systematicDeg: number;
};

async function residuals(campaignId: number): Promise<Residual[]> {
  const r = await callRoute(GET, {
    method: 'GET',
    path: `/api/campaigns/${campaignId}/helicity`,
    params: { campaignId: String(campaignId) },
  });
  expect(r.status, JSON.stringify(r.json)).toBe(200);
  return (r.json as { residuals: Residual[] }).residuals;
}

describe('helicity-difference residual over current results', () => {
  it('pairs h = +1 and h = −1 at matching conditions and reports half their difference', async () => {
    const t = w.a;
    actAs(w.users.analyst);
    const plusScan = (await Scan.findByPk(t.scanId))!;
    expect(plusScan.helicity).toBe(1);
    // one helicity only: nothing to pair
    expect((await residuals(t.campaignId)).filter((r) => r.plus.scanSteps.some((s) => s.scanId === t.scanId))).toEqual(
      [],
    );
    const plusResult = (await ScanResult.findByPk(t.resultId))!;
    const plusSteps = await ScanResultStep.findAll({
      where: { result_id: t.resultId },
      order: [['step_index', 'ASC']],
    });
    expect(plusSteps.length).toBeGreaterThan(0);
    for (const s of plusSteps) expect(s.offset_deg).not.toBeNull();

    const minusId = await w.freshScan(t);
    await Scan.update(
      {
        experiment_kind: plusScan.experiment_kind,
        target: plusScan.target,
        wavelength_nm: plusScan.wavelength_nm,
        ellipticity: plusScan.ellipticity,
        step_quantity: plusScan.step_quantity,
        helicity: -1,
        status: 'reduced',
      },
      { where: { id: minusId } },
    );
    const minusScan = (await Scan.findByPk(minusId))!;
    const minusResult = await ScanResult.create({
      scan_id: minusId,
      raw_file_id: minusScan.raw_file_id,
      calibration_id: t.calibrationId,
      settings_id: t.settingsId,
      job_id: null,
      result_json: plusResult.result_json,
      derived_bucket: null,
      derived_key: null,
      software_version: plusResult.software_version,
      offset_deg: null,
      offset_err_deg: null,
      warnings_count: 0,
    } as never);
    for (const s of plusSteps) {
      await ScanResultStep.create({
        result_id: minusResult.id,
        step_index: s.step_index,
        value: s.value,
        total_counts: s.total_counts,
        offset_deg: (s.offset_deg as number) - 2,
        offset_err_deg: s.offset_err_deg,
        transverse_shift_au: null,
        radius_au: null,
        radius_err_au: null,
        intensity_wcm2: null,
        intensity_err_wcm2: null,
        lobes: null,
      } as never);
    }

    const mine = (await residuals(t.campaignId)).filter((r) => r.minus.scanSteps.some((s) => s.scanId === minusId));
    expect(mine).toHaveLength(plusSteps.length);
    for (const r of mine) {
      const p = plusSteps.find((s) => Math.abs((s.value as number) - r.value) <= 1e-9 * Math.abs(r.value))!;
      expect(r.plus.scanSteps.map((s) => s.scanId)).toEqual([t.scanId]);
      // ½[(off) − (off − 2)] = 1; ½[off + off − 2] = off − 1
      expect(r.residualDeg).toBeCloseTo(1, 9);
      expect(r.systematicDeg).toBeCloseTo(1, 9);
      expect(r.meanOffsetDeg).toBeCloseTo((p.offset_deg as number) - 1, 9);
    }

    // a flagged partner pairs with nothing
    await Scan.update({ flagged: true, flag_note: 'test: laser mode-hopped' }, { where: { id: minusId } });
    expect((await residuals(t.campaignId)).filter((r) => r.minus.scanSteps.some((s) => s.scanId === minusId))).toEqual(
      [],
    );
  });
});
