// Campaign comparison API (issue 13) against the real MariaDB: the step points of chosen campaigns with their
// provenance (compared with the stored result rows), access per campaign and scan (a PI of two teams reads both, an
// analyst of one team is refused the other's, the steward is refused results), intensity conventions (mixing is
// refused with a sentence, or converted by the §1.2 factor 1 + ε² from linear-equivalent to the cycle-averaged
// total — SCIENCE.md §1.2, C5), zod refusals, and saved comparisons re-checked at every open (a campaign the viewer
// may no longer read is listed as hidden). Per-role statuses of every route are in policy-matrix.test.ts.
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import type { ComparisonPoint, PointsAnswer } from '@/lib/comparison/spec';
import type { World } from './helpers/world';

vi.mock('server-only', () => ({}));

const { callRoute } = await import('./helpers/call');
const { actAs, clearSession } = await import('./helpers/session');
const { makeWorld } = await import('./helpers/world');
const { closeSequelize, getDb } = await import('@/lib/db');
const { closeReductionQueue } = await import('@/lib/queue/reduction-queue');
const { closeS3Client } = await import('@/lib/storage/s3');
const { Membership, ModelCacheEntry, RawFile, Scan, ScanResult, ScanResultStep } = await import('@/models');
const points = await import('@/app/api/comparisons/points/route');
const saved = await import('@/app/api/comparisons/route');
const one = await import('@/app/api/comparisons/[comparisonId]/route');
const sources = await import('@/app/api/comparisons/sources/route');
const models = await import('@/app/api/comparisons/models/route');

let w: World;
let piBoth: number;
beforeAll(async () => {
  w = await makeWorld({ data: true });
  // the PI of both teams (the demo lab's PI leads both groups)
  piBoth = await w.freshUser({ teamId: w.teamA, role: 'pi' });
  await Membership.create({ user_id: piBoth, team_id: w.teamB, role: 'pi' });
});
afterAll(async () => {
  clearSession();
  await w?.cleanup();
  await (await import('@/lib/queue/model-queue')).closeModelQueue();
  await closeReductionQueue();
  closeS3Client();
  await closeSequelize();
});

async function getPoints(query: Record<string, string | number>) {
  return callRoute(points.GET, { method: 'GET', path: '/api/comparisons/points', query });
}

async function setConvention(rawFileId: number, convention: string | null) {
  await getDb().query(
    convention === null
      ? "UPDATE raw_files SET metadata = JSON_REMOVE(metadata, '$.intensityConvention') WHERE id = ?"
      : "UPDATE raw_files SET metadata = JSON_SET(metadata, '$.intensityConvention', ?) WHERE id = ?",
    { replacements: convention === null ? [rawFileId] : [convention, rawFileId] },
  );
}

describe('step points with provenance', () => {
  it('a PI of two teams reads both campaigns; every point matches its stored step row and names what made it', async () => {
    actAs(piBoth);
    const r = await getPoints({ campaigns: `${w.a.campaignId},${w.b.campaignId}` });
    expect(r.status, JSON.stringify(r.json)).toBe(200);
    const body = r.json as PointsAnswer;
    expect(body.convention).toBe('cycle_averaged_total');
    expect(body.conversions).toEqual([]);
    const scans = new Set(body.points.map((p) => p.scanId));
    expect(scans).toEqual(new Set([w.a.scanId, w.b.scanId]));
    for (const t of [w.a, w.b]) {
      const steps = await ScanResultStep.findAll({ where: { result_id: t.resultId }, order: [['step_index', 'ASC']] });
      const result = (await ScanResult.findByPk(t.resultId))!;
      const mine = body.points.filter((p) => p.scanId === t.scanId);
      expect(mine.length).toBe(steps.length);
      expect(mine.length).toBeGreaterThan(0);
      for (const [i, s] of steps.entries()) {
        const p = mine[i] as ComparisonPoint;
        expect(p.stepIndex).toBe(s.step_index);
        expect(p.offsetDeg).toBe(s.offset_deg);
        expect(p.offsetErrDeg).toBe(s.offset_err_deg);
        expect(p.radiusAu).toBe(s.radius_au);
        expect(p.radiusIntensityWcm2).toBe(s.intensity_wcm2);
        expect(p.stepValue).toBe(s.value);
        // the systematic error, where the result reports one, comes from the result JSON's own step
        const js = result.result_json.steps.find((x) => x.index === s.step_index);
        expect(p.offsetSysErrDeg).toBe(js?.offset_sys_err_deg ?? null);
        expect(p.provenance).toMatchObject({
          scanId: t.scanId,
          resultId: t.resultId,
          calibrationId: t.calibrationId,
          settingsId: t.settingsId,
          softwareVersion: result.software_version,
          intensityConvention: 'cycle_averaged_total',
          statedConvention: 'cycle_averaged_total',
          conventionFactor: 1,
        });
        expect(p.provenance.calibrationVersion).toBeGreaterThan(0);
      }
      expect(mine[0]!.teamId).toBe(t.teamId);
    }
  });

  it('the campaigns to pick from: both teams for the PI of both, one team for an analyst', async () => {
    actAs(piBoth);
    const both = (await callRoute(sources.GET, { method: 'GET', path: '/api/comparisons/sources' })).json as {
      campaigns: { id: number; scans: { id: number }[] }[];
    };
    const ids = both.campaigns.map((c) => c.id);
    expect(ids).toEqual(expect.arrayContaining([w.a.campaignId, w.b.campaignId]));
    expect(both.campaigns.find((c) => c.id === w.a.campaignId)!.scans.map((s) => s.id)).toContain(w.a.scanId);
    actAs(w.users.analyst);
    const mine = (await callRoute(sources.GET, { method: 'GET', path: '/api/comparisons/sources' })).json as {
      campaigns: { id: number }[];
    };
    expect(mine.campaigns.map((c) => c.id)).toContain(w.a.campaignId);
    expect(mine.campaigns.map((c) => c.id)).not.toContain(w.b.campaignId);
  });

  it('an analyst of one team: own campaign yes; the other team’s campaign or scan is 404, even beside an own one', async () => {
    actAs(w.users.analyst);
    expect((await getPoints({ campaigns: w.a.campaignId })).status).toBe(200);
    expect((await getPoints({ campaigns: `${w.a.campaignId},${w.b.campaignId}` })).status).toBe(404);
    expect((await getPoints({ scans: w.b.scanId })).status).toBe(404);
    expect((await getPoints({ scans: w.a.scanId })).status).toBe(200);
  });

  it('the steward (metadata only) is refused the results: 403', async () => {
    actAs(w.users.steward);
    const r = await getPoints({ campaigns: w.a.campaignId });
    expect(r.status).toBe(403);
  });

  it('bad input is refused with sentences naming the field', async () => {
    actAs(piBoth);
    const r1 = await getPoints({ campaigns: 'twelve' });
    expect(r1.status).toBe(400);
    expect(JSON.stringify(r1.json)).toMatch(/campaigns/);
    const r2 = await getPoints({});
    expect(r2.status).toBe(400);
    expect(JSON.stringify(r2.json)).toMatch(/at least one campaign or scan/);
    const r3 = await getPoints({ campaigns: w.a.campaignId, convention: 'watts' });
    expect(r3.status).toBe(400);
    expect(JSON.stringify(r3.json)).toMatch(/convention/);
  });

  it('filters: a target that is not there gives no points; flagged scans can be left out', async () => {
    actAs(piBoth);
    const none = (await getPoints({ campaigns: w.a.campaignId, targets: 'Xe' })).json as PointsAnswer;
    expect(none.points).toEqual([]);
    const ownCal = (await getPoints({ campaigns: w.a.campaignId, calibrations: w.a.calibrationId }))
      .json as PointsAnswer;
    expect(ownCal.points.some((p) => p.scanId === w.a.scanId)).toBe(true);
    const otherCal = (await getPoints({ campaigns: w.a.campaignId, calibrations: w.a.draftCalibrationId }))
      .json as PointsAnswer;
    expect(otherCal.points).toEqual([]);
    await Scan.update({ flagged: true }, { where: { id: w.a.scanId } });
    try {
      const kept = (await getPoints({ campaigns: w.a.campaignId })).json as PointsAnswer;
      expect(kept.points.filter((p) => p.scanId === w.a.scanId).every((p) => p.flagged)).toBe(true);
      const left = (await getPoints({ campaigns: w.a.campaignId, flagged: 'exclude' })).json as PointsAnswer;
      expect(left.points.filter((p) => p.scanId === w.a.scanId)).toEqual([]);
    } finally {
      await Scan.update({ flagged: false }, { where: { id: w.a.scanId } });
    }
  });
});

describe('intensity conventions (SCIENCE.md §1.2, C5)', () => {
  it('mixing is refused with a sentence; naming a convention converts by 1 + ε² and says so', async () => {
    actAs(piBoth);
    const scanB = (await Scan.findByPk(w.b.scanId))!;
    const eps = Number(scanB.ellipticity);
    expect(eps).toBeGreaterThan(0);
    await setConvention(scanB.raw_file_id, 'linear_equivalent');
    try {
      const refused = await getPoints({ campaigns: `${w.a.campaignId},${w.b.campaignId}` });
      expect(refused.status).toBe(409);
      const message = (refused.json as { error: { message: string } }).error.message;
      expect(message).toMatch(/different conventions/);
      expect(message).toMatch(/linear-equivalent/);
      expect(message).toMatch(/Choose one convention/);

      const r = await getPoints({
        campaigns: `${w.a.campaignId},${w.b.campaignId}`,
        convention: 'cycle_averaged_total',
      });
      expect(r.status, JSON.stringify(r.json)).toBe(200);
      const body = r.json as PointsAnswer;
      expect(body.conversions.length).toBe(1);
      expect(body.conversions[0]).toMatch(/converted from linear-equivalent/);
      const steps = await ScanResultStep.findAll({
        where: { result_id: w.b.resultId },
        order: [['step_index', 'ASC']],
      });
      const bPoints = body.points.filter((p) => p.scanId === w.b.scanId);
      // I_total = I_lin (1 + ε²) for elliptical light (§1.2: I = I_au,lin F_a²(1 + ε²), I_lin = I_au,lin F_a²)
      for (const [i, s] of steps.entries()) {
        const p = bPoints[i]!;
        expect(p.provenance.statedConvention).toBe('linear_equivalent');
        expect(p.provenance.conventionFactor).toBeCloseTo(1 + eps * eps, 12);
        expect(p.radiusIntensityWcm2!).toBeCloseTo(s.intensity_wcm2! * (1 + eps * eps), -6);
        expect(p.stepValue!).toBeCloseTo(s.value! * (1 + eps * eps), -6); // an intensity scan: the step converts too
        expect(p.offsetDeg).toBe(s.offset_deg); // angles do not
      }
      for (const p of body.points.filter((x) => x.scanId === w.a.scanId)) expect(p.provenance.conventionFactor).toBe(1);

      // without an ellipticity the linear-equivalent intensity cannot be converted: refused, naming the scan
      await Scan.update({ ellipticity: null }, { where: { id: w.b.scanId } });
      const cannot = await getPoints({ campaigns: w.b.campaignId, convention: 'cycle_averaged_total' });
      expect(cannot.status).toBe(409);
      expect((cannot.json as { error: { message: string } }).error.message).toMatch(/ellipticity is not known/);
    } finally {
      await Scan.update({ ellipticity: eps }, { where: { id: w.b.scanId } });
      await setConvention(scanB.raw_file_id, 'cycle_averaged_total');
    }
    const raw = (await RawFile.findByPk(scanB.raw_file_id))!;
    expect(raw.metadata?.intensityConvention).toBe('cycle_averaged_total');
  });
});

describe('saved comparisons', () => {
  it('the PI saves one for team A; team A members open it; access is re-checked at every open', async () => {
    actAs(piBoth);
    const spec = {
      selection: { campaignIds: [w.a.campaignId, w.b.campaignId], scanIds: [] },
      axes: { y: 'offset', x: 'radius_intensity', xScale: 'log', yScale: 'linear' },
      seriesBy: 'campaign',
      models: ['trajectory'],
    };
    const created = await callRoute(saved.POST, {
      method: 'POST',
      path: '/api/comparisons',
      body: { title: w.unique('Ne at 800 nm, two years'), teamId: w.teamA, spec },
    });
    expect(created.status, JSON.stringify(created.json)).toBe(201);
    const id = (created.json as { comparison: { id: string } }).comparison.id;
    expect(id).toMatch(/^[a-z0-9]{12}$/);
    const open = async () =>
      callRoute(one.GET, { method: 'GET', path: `/api/comparisons/${id}`, params: { comparisonId: id } });

    // the PI of both sees everything, with the spec as saved (defaults filled in)
    const mine = (await open()).json as {
      comparison: { spec: { axes: { x: string; xScale: string }; models: string[] } };
      visible: { campaignIds: number[] };
      hidden: { campaignIds: number[] };
    };
    expect(mine.comparison.spec.axes).toMatchObject({ x: 'radius_intensity', xScale: 'log' });
    expect(mine.comparison.spec.models).toEqual(['trajectory']);
    expect(mine.visible.campaignIds).toEqual([w.a.campaignId, w.b.campaignId]);
    expect(mine.hidden.campaignIds).toEqual([]);

    // an analyst of team A opens it: team B's campaign is hidden, not an error
    actAs(w.users.analyst);
    const r = await open();
    expect(r.status).toBe(200);
    const body = r.json as {
      visible: { campaignIds: number[] };
      hidden: { campaignIds: number[] };
      canDelete: boolean;
    };
    expect(body.visible.campaignIds).toEqual([w.a.campaignId]);
    expect(body.hidden.campaignIds).toEqual([w.b.campaignId]);
    expect(body.canDelete).toBe(false);
    // and is listed for them
    const list = (await callRoute(saved.GET, { method: 'GET', path: '/api/comparisons' })).json as {
      comparisons: { id: string }[];
    };
    expect(list.comparisons.map((c) => c.id)).toContain(id);

    // a member of team B only: the comparison of team A is not theirs to see (404)
    actAs(w.users.memberB);
    expect((await open()).status).toBe(404);

    // the PI loses team B: on the next open B's campaign is hidden for them too
    await Membership.destroy({ where: { user_id: piBoth, team_id: w.teamB } });
    try {
      actAs(piBoth);
      const again = (await open()).json as { hidden: { campaignIds: number[] } };
      expect(again.hidden.campaignIds).toEqual([w.b.campaignId]);
    } finally {
      await Membership.create({ user_id: piBoth, team_id: w.teamB, role: 'pi' });
    }
  });

  it('saving refuses a campaign the saver may not read, and a spec that does not parse', async () => {
    actAs(w.users.pi); // PI of team A only
    const other = await callRoute(saved.POST, {
      method: 'POST',
      path: '/api/comparisons',
      body: { title: 'mixed', teamId: w.teamA, spec: { selection: { campaignIds: [w.a.campaignId, w.b.campaignId] } } },
    });
    expect(other.status).toBe(404);
    const bad = await callRoute(saved.POST, {
      method: 'POST',
      path: '/api/comparisons',
      body: { title: '', teamId: w.teamA, spec: { selection: { campaignIds: ['x'] }, axes: { y: 'colour' } } },
    });
    expect(bad.status).toBe(400);
    const details = (bad.json as { error: { details: string[] } }).error.details.join(' ');
    expect(details).toMatch(/title/);
    expect(details).toMatch(/spec\.selection\.campaignIds/);
    expect(details).toMatch(/spec\.axes\.y/);
  });
});

describe('model overlays route', () => {
  const call = (query: Record<string, string | number>) =>
    callRoute(models.GET, { method: 'GET', path: '/api/comparisons/models', query });
  it('answers every model with its assumptions; §10.5: He, 800 nm, 4×10¹⁴ W/cm², ε = 0.87 → θ_off = 5.286°', async () => {
    actAs(w.users.analyst);
    const r = await call({ target: 'He', wavelengthNm: 800, ellipticity: 0.87, intensities: '4e14' });
    expect(r.status, JSON.stringify(r.json)).toBe(200);
    const body = r.json as { curves: { model: string; assumptions: string; points: { offsetDeg: number }[] }[] };
    expect(body.curves.map((c) => c.model)).toEqual(['simple_man', 'trajectory', 'keldysh_rutherford']);
    expect(body.curves[1]!.points[0]!.offsetDeg).toBeCloseTo(5.286, 3);
    for (const c of body.curves) expect(c.assumptions.length).toBeGreaterThan(40);
  });
  it('refuses intensities out of range and unknown models with sentences', async () => {
    actAs(w.users.analyst);
    const r = await call({
      target: 'He',
      wavelengthNm: 800,
      ellipticity: 0.87,
      intensities: '4e20',
      models: 'quantum_orbit',
    });
    expect(r.status).toBe(400);
    const details = (r.json as { error: { details: string[] } }).error.details.join(' ');
    expect(details).toMatch(/intensities/);
    expect(details).toMatch(/models/);
  });
});

describe('model cache in MariaDB and the model queue', () => {
  const call = (query: Record<string, string | number>) =>
    callRoute(models.GET, { method: 'GET', path: '/api/comparisons/models', query });
  type Curve = {
    model: string;
    state?: string;
    cached?: boolean;
    sampling?: string;
    progress?: { done: number; total: number } | null;
    points: { intensityWcm2: number; offsetDeg: number | null; widthDeg?: number | null }[];
  };
  it('a fast model is computed once, stored under its parameter hash with its code version, then served from the cache', async () => {
    actAs(w.users.analyst);
    // a second intensity of its own for this run, so that an earlier run's cache row is not found
    const other = Number((1.3e14 + Math.floor(Math.random() * 1e6) * 1e6).toPrecision(12));
    const q = {
      target: 'Ar',
      wavelengthNm: 800,
      ellipticity: 0.87,
      intensities: `1e14,${other}`,
      models: 'trajectory',
    };
    const first = (await call(q)).json as { curves: Curve[] };
    const second = (await call(q)).json as { curves: Curve[] };
    expect(first.curves[0]!.cached).toBe(false);
    expect(second.curves[0]!.cached).toBe(true);
    // §10.5 table: Ar, 800 nm, 1×10¹⁴ W/cm², ε = 0.87 → 11.589° (triangular exit), from the cache as computed
    expect(second.curves[0]!.points[0]!.offsetDeg).toBeCloseTo(11.589, 2);
    const { modelParamHash, MODEL_CODE_VERSION } = await import('@/lib/comparison/model-cache');
    const hash = modelParamHash('trajectory', {
      target: 'Ar',
      wavelengthNm: 800,
      ellipticity: 0.87,
      intensitiesWcm2: [1e14, other],
    });
    const row = await ModelCacheEntry.findOne({ where: { param_hash: hash } });
    expect(row?.state).toBe('done');
    expect(row?.code_version).toBe(MODEL_CODE_VERSION.trajectory);
  });
  it('the hash is canonical: key order and float noise below 10 digits do not change it, a parameter does', async () => {
    const { modelParamHash } = await import('@/lib/comparison/model-cache');
    const a = modelParamHash('ensemble', { target: 'He', wavelengthNm: 800, ellipticity: 0.87 });
    expect(modelParamHash('ensemble', { ellipticity: 0.87 + 1e-14, wavelengthNm: 800, target: 'He' })).toBe(a);
    expect(modelParamHash('ensemble', { target: 'He', wavelengthNm: 800, ellipticity: 0.88 })).not.toBe(a);
    expect(modelParamHash('trajectory', { target: 'He', wavelengthNm: 800, ellipticity: 0.87 })).not.toBe(a);
  });
  it('the ensemble is queued once with its progress, run by the model job, then answered from the cache', async () => {
    actAs(w.users.analyst);
    const q = { target: 'He', wavelengthNm: 800, ellipticity: 0.87, intensities: '3e14,5e14', models: 'ensemble' };
    const { ensembleParamsOf, modelParamHash } = await import('@/lib/comparison/model-cache');
    const hash = modelParamHash(
      'ensemble',
      ensembleParamsOf({ target: 'He', wavelengthNm: 800, ellipticity: 0.87, intensitiesWcm2: [3e14, 5e14] }) as never,
    );
    await ModelCacheEntry.destroy({ where: { param_hash: hash } }); // a row left by an earlier run of this test
    const first = ((await call(q)).json as { curves: Curve[] }).curves[0]!;
    expect(first.state).toBe('queued');
    expect(first.sampling).toBe('grid');
    // grid 10^(k/10) W/cm² around 3–5×10¹⁴: 2.51, 3.16, 3.98, 5.01 ×10¹⁴
    expect(first.points.map((p) => p.intensityWcm2)).toEqual([2.51189e14, 3.16228e14, 3.98107e14, 5.01187e14]);
    expect(first.progress).toEqual({ done: 0, total: 4 * 20_000 });
    const again = ((await call(q)).json as { curves: Curve[] }).curves[0]!;
    expect(again.state).toBe('queued');
    const rows = await ModelCacheEntry.findAll({ where: { param_hash: hash } });
    expect(rows.length).toBe(1);
    const row = rows[0]!;
    const { getModelQueue, modelJobId } = await import('@/lib/queue/model-queue');
    const job = await getModelQueue().getJob(modelJobId(row.param_hash));
    expect(job?.data).toEqual({ cacheId: row.id, paramHash: row.param_hash });
    await job?.remove().catch(() => undefined); // run it here instead, smaller (no worker in this test process)
    // a test-sized run of the same row: 2 intensities of 400 trajectories (the plumbing, not the physics)
    await row.update({ params: { ...row.params, intensitiesWcm2: [3.16228e14, 3.98107e14], trajectories: 400 } });
    const { processModelJob } = await import('@/lib/jobs/model-job');
    const seen: number[] = [];
    await processModelJob({ cacheId: row.id, paramHash: row.param_hash }, async (p) => {
      seen.push(p);
    });
    expect(seen.at(-1)).toBe(100);
    await row.reload();
    expect(row.state).toBe('done');
    expect(row.progress_done).toBe(800);
    expect(row.compute_ms).not.toBeNull();
    const done = ((await call(q)).json as { curves: Curve[] }).curves[0]!;
    expect(done.state).toBe('done');
    expect(done.cached).toBe(true);
    expect(done.points).toHaveLength(2);
    // 400 trajectories are too few for a meaningful fit (the physics is checked in tests/unit/models/ensemble.test.ts
    // at 40 000): here only that the stored curve is the one the job computed for the row's intensities
    expect(done.points.map((p) => p.intensityWcm2)).toEqual([3.16228e14, 3.98107e14]);
    for (const p of done.points) expect(Number.isFinite(p.offsetDeg)).toBe(true);
  }, 120_000);
});

describe('phase-delay curves of two-colour scans', () => {
  it('a two-colour scan of the selection brings its yield-versus-phase curves; its steps need no convention', async () => {
    const t = w.a;
    actAs(piBoth);
    const phaseScanId = await w.freshScan(t);
    const scan = (await Scan.findByPk(phaseScanId))!;
    await Scan.update(
      { experiment_kind: 'two_color_phase', step_quantity: 'relative_phase', status: 'reduced', target: 'Ar' },
      { where: { id: phaseScanId } },
    );
    // the file states its intensity per colour; the angular-streaking scan beside it states the total: phase steps
    // carry no intensity, so this is no mixing (and is not refused)
    await RawFile.update(
      { metadata: { intensityConvention: 'per_colour' } as never },
      { where: { id: scan.raw_file_id } },
    );
    const base = (await ScanResult.findByPk(t.resultId))!;
    // a phase analysis written by hand: Y = 100 + 40 cos(φ − 0.5) at four phases (C10), contrast 0.4
    const phi = [0, Math.PI / 2, Math.PI, (3 * Math.PI) / 2];
    const yieldAt = phi.map((p) => 100 + 40 * Math.cos(p - 0.5));
    const phase = {
      method: 'fourier',
      n_phases: 4,
      periods: 1,
      phase_offset_rad: 0,
      regions: [{ name: 'all', phase_rad: phi, yield: yieldAt, a0: 100, a1: 40, phase_of_max_rad: 0.5, contrast: 0.4 }],
    };
    const result = await ScanResult.create({
      scan_id: phaseScanId,
      raw_file_id: scan.raw_file_id,
      calibration_id: t.calibrationId,
      settings_id: t.settingsId,
      job_id: null,
      result_json: { ...base.result_json, phase, steps: [] },
      derived_bucket: null,
      derived_key: null,
      software_version: base.software_version,
      offset_deg: null,
      offset_err_deg: null,
      warnings_count: 0,
    } as never);
    for (const [i, p] of phi.entries()) {
      await ScanResultStep.create({
        result_id: result.id,
        step_index: i,
        value: p,
        total_counts: yieldAt[i],
        offset_deg: null,
        offset_err_deg: null,
        transverse_shift_au: null,
        radius_au: null,
        radius_err_au: null,
        intensity_wcm2: null,
        intensity_err_wcm2: null,
        lobes: null,
      } as never);
    }
    const r = await getPoints({ campaigns: t.campaignId });
    expect(r.status, JSON.stringify(r.json)).toBe(200);
    const body = r.json as PointsAnswer;
    expect(body.conversions).toEqual([]);
    const curves = body.phaseCurves.filter((c) => c.scanId === phaseScanId);
    expect(curves).toHaveLength(1);
    expect(curves[0]).toMatchObject({ region: 'all', method: 'fourier', a0: 100, a1: 40, contrast: 0.4 });
    expect(curves[0]!.phaseRad).toEqual(phi);
    expect(curves[0]!.yield).toEqual(yieldAt);
    expect(curves[0]!.provenance).toMatchObject({ resultId: result.id, calibrationId: t.calibrationId });
    // the phase steps are points too (no offsets), stated convention as the file says, factor 1
    const steps = body.points.filter((p) => p.scanId === phaseScanId);
    expect(steps).toHaveLength(4);
    for (const p of steps) {
      expect(p.provenance.statedConvention).toBe('per_colour');
      expect(p.provenance.conventionFactor).toBe(1);
    }
    // filters apply to the curves as to the points
    const none = (await getPoints({ campaigns: t.campaignId, targets: 'He' })).json as PointsAnswer;
    expect(none.phaseCurves.filter((c) => c.scanId === phaseScanId)).toEqual([]);
    await Scan.update({ status: 'uploaded' }, { where: { id: phaseScanId } });
  });
});
