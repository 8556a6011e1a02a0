// tsx scripts/demo-neon.ts — two neon campaigns at 800 nm for the fictional Harbor Point Ultrafast Lab, and the PI's
// kept comparison of them (idempotent: files already catalogued are skipped, a comparison of that title is kept as
// it is). Run by scripts/start.sh after scripts/demo-scans.ts on the dev instance; never by scripts/test.sh.
//
// The question the kept page answers: does this year's neon offset at 800 nm follow the Coulomb-corrected model
// better than last year's campaign? ALL DATA ARE INVENTED by the project's generator (reduction/synth); they are
// not measurements, and the difference between the years is planted on purpose:
// - "Ne 800 nm elliptical (2026)": true offsets taken from the Coulomb-corrected trajectory model itself
//   (lib/comparison/models.ts, Ne, 800 nm, ε = 0.87), computed here at generation time at every step intensity;
// - "Ne 800 nm elliptical (2025)": the same model plus a constant NEON_2025_EXCESS_DEG (invented, as if an
//   uncorrected systematic of that year's set-up lifted every offset). Its calibration v1 (approved in 2025, used
//   by the 2025 reductions) has a momentum scale NEON_2025_V1_SCALE too large, so its in-situ intensities come out
//   ≈ 5 % high; v2 (approved later, the generator's true scale) re-reduces one of the files, so a comparison by
//   calibration version has two versions to show.
// Files go through the same ingest as a browser upload (lib/ingest/service.ts) and the worker reduces them.
import { createHash } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import type { DemoFile } from './demo-scans';

const invokedDirectly = !!process.argv[1] && path.resolve(process.argv[1]) === path.resolve(import.meta.filename);
if (invokedDirectly) await import('./server-only-shim');

// PLAN //

export const NEON = { target: 'Ne', wavelengthNm: 800, ellipticity: 0.87 } as const;
export const CAMPAIGN_2025 = 'Ne 800 nm elliptical (2025)';
export const CAMPAIGN_2026 = 'Ne 800 nm elliptical (2026)';
/** Invented: last year's true offsets sit this much above the trajectory model (deg). */
export const NEON_2025_EXCESS_DEG = 1.2;
/** Invented: calibration v1 of 2025 has its momentum per pixel this factor too large (in-situ intensity × its square). */
export const NEON_2025_V1_SCALE = 1.025;
/** The planted offsets equal the intended ones at every step within this (deg; only rounding). */
export const PLAN_TOLERANCE_DEG = 1e-9;
export const COMPARISON_TITLE = 'Ne 800 nm: does 2026 follow the Coulomb-corrected model better than 2025?';

const OPERATOR = 'operator@harbor-point.example';
const NOTE = 'Harbor Point Ultrafast Lab demo scan: synthetic counts with invented values, not a measurement.';
const LAST_MODIFIED_MS = Date.UTC(2026, 10, 20, 9, 30, 0);

interface FileSpec {
  fileName: string;
  year: 2025 | 2026;
  shift: string;
  steps: number;
  iMin: number;
  iMax: number;
  seed: number;
  counts?: number;
}

const FILES: FileSpec[] = [
  {
    fileName: 'hp-ne800-2025-I1-3.h5',
    year: 2025,
    shift: 'Neon intensity scans, November 2025',
    steps: 6,
    iMin: 1e14,
    iMax: 3e14,
    seed: 9251,
  },
  {
    fileName: 'hp-ne800-2025-I2-6.h5',
    year: 2025,
    shift: 'Neon intensity scans, November 2025',
    steps: 6,
    iMin: 2e14,
    iMax: 6e14,
    seed: 9252,
  },
  {
    fileName: 'hp-ne800-2025-I1.5-4.5.h5',
    year: 2025,
    shift: 'Neon intensity scans, November 2025',
    steps: 5,
    iMin: 1.5e14,
    iMax: 4.5e14,
    seed: 9253,
  },
  {
    fileName: 'hp-ne800-2026-I1-3.h5',
    year: 2026,
    shift: 'Neon intensity scans, realigned VMI',
    steps: 6,
    iMin: 1e14,
    iMax: 3e14,
    seed: 9261,
  },
  {
    fileName: 'hp-ne800-2026-I2-6.h5',
    year: 2026,
    shift: 'Neon intensity scans, realigned VMI',
    steps: 6,
    iMin: 2e14,
    iMax: 6e14,
    seed: 9262,
  },
  {
    fileName: 'hp-ne800-2026-I1.5-4.5.h5',
    year: 2026,
    shift: 'Neon intensity scans, realigned VMI',
    steps: 5,
    iMin: 1.5e14,
    iMax: 4.5e14,
    seed: 9263,
  },
];
/** The 2025 file re-reduced with calibration v2. */
export const REREDUCED_WITH_V2 = 'hp-ne800-2025-I2-6.h5';

export interface NeonFile extends DemoFile {
  year: 2025 | 2026;
  /** Step intensities (W/cm²) and the trajectory model's offsets there (deg). */
  intensitiesWcm2: number[];
  modelDeg: number[];
  /** The offsets the file is meant to carry: model (2026) or model + NEON_2025_EXCESS_DEG (2025). */
  targetDeg: number[];
}

function linspace(a: number, b: number, n: number): number[] {
  return Array.from({ length: n }, (_, i) => a + ((b - a) * i) / (n - 1));
}

/**
 * The generation plan: per file, the trajectory model at its step intensities (computed now, with the code the
 * comparison page draws), and the true offsets the generator plants step by step (its `offsetsDeg` option).
 */
export async function planNeonFiles(): Promise<NeonFile[]> {
  const { modelCurve } = await import('@/lib/comparison/models');
  return FILES.map((f) => {
    const intensities = linspace(f.iMin, f.iMax, f.steps);
    const curve = modelCurve({ model: 'trajectory', ...NEON, intensitiesWcm2: intensities });
    const modelDeg = curve.points.map((p) => {
      if (p.offsetDeg === null) throw new Error(`the trajectory model has no neon offset at ${p.intensityWcm2} W/cm²`);
      return p.offsetDeg;
    });
    const targetDeg = modelDeg.map((m) => m + (f.year === 2025 ? NEON_2025_EXCESS_DEG : 0));
    const range = `${f.iMin / 1e14}–${f.iMax / 1e14} × 10¹⁴ W/cm²`;
    return {
      fileName: f.fileName,
      campaign: f.year === 2025 ? CAMPAIGN_2025 : CAMPAIGN_2026,
      shift: f.shift,
      uploader: OPERATOR,
      year: f.year,
      intensitiesWcm2: intensities,
      modelDeg,
      targetDeg,
      options: {
        kind: 'angular_streaking',
        target: NEON.target,
        wavelengthNm: NEON.wavelengthNm,
        ellipticity: NEON.ellipticity,
        steps: f.steps,
        intensityMinWcm2: f.iMin,
        intensityMaxWcm2: f.iMax,
        offsetDeg: targetDeg[0]!,
        offsetsDeg: targetDeg,
        counts: f.counts ?? 2e5,
        seed: f.seed,
        compression: 'gzip',
      },
      text: {
        title: `Ne 800 nm, ε = 0.87: intensity scan ${range} (${f.year})`,
        comment:
          f.year === 2025
            ? `${NOTE} Last year's campaign; offsets planted ${NEON_2025_EXCESS_DEG}° above the trajectory model.`
            : `${NOTE} This year's campaign after realigning the VMI; offsets planted on the trajectory model.`,
      },
    };
  });
}

// MAIN //

async function main(): Promise<number> {
  const { loadDotEnv, DEMO_CALIBRATION_INPUT } = await import('./seed');
  loadDotEnv();
  const { getEnv } = await import('@/lib/env');
  getEnv();
  const { getDb } = await import('@/lib/db');
  const db = getDb();
  const { getActorByUserId } = await import('@/lib/db/queries/accounts');
  const models = await import('@/models');
  const { parseCalibration, parseSettings } = await import('@/reduction/formats');
  const team = await models.Team.findOne({ where: { slug: 'attoclock' } });
  const [operator, analyst, pi] = await Promise.all(
    ['operator', 'analyst', 'pi'].map((u) => models.User.findOne({ where: { email: `${u}@harbor-point.example` } })),
  );
  if (!team || !operator || !analyst || !pi) throw new Error('the demo team or users are missing; run the seed first');

  const cal = (scale: number, note: string) => {
    const c = parseCalibration({
      ...DEMO_CALIBRATION_INPUT,
      momentum_per_pixel_au: DEMO_CALIBRATION_INPUT.momentum_per_pixel_au * scale,
      note,
    });
    if (!c.ok) throw new Error(`demo neon calibration invalid: ${c.problems.join('; ')}`);
    return c.value;
  };
  const settings = parseSettings({ note: 'Demo settings v1: defaults of FORMATS §3.' });
  if (!settings.ok) throw new Error('demo neon settings are invalid');

  // campaigns, calibration and settings versions, shifts
  const setUp = async (year: 2025 | 2026) =>
    db.transaction(async (t) => {
      const name = year === 2025 ? CAMPAIGN_2025 : CAMPAIGN_2026;
      const [campaign] = await models.Campaign.findOrCreate({
        where: { team_id: team.id, name },
        defaults: {
          team_id: team.id,
          name,
          target: 'Ne',
          wavelength_nm: 800,
          experiment_kind: 'angular_streaking',
          description:
            year === 2025
              ? 'Neon offsets versus intensity, ellipticity 0.87 — last year’s campaign (invented demo data).'
              : 'Neon offsets versus intensity, ellipticity 0.87, after realigning the VMI (invented demo data).',
          created_by: analyst.id,
          current_calibration_id: null,
          current_settings_id: null,
          embargo_until: null,
        },
        transaction: t,
      });
      const approvedAt = year === 2025 ? new Date(Date.UTC(2025, 10, 3, 14)) : new Date(Date.UTC(2026, 9, 12, 10));
      const approved = { status: 'approved' as const, created_by: analyst.id, approved_by: pi.id };
      const [v1] = await models.DetectorCalibrationVersion.findOrCreate({
        where: { campaign_id: campaign.id, version: 1 },
        defaults: {
          campaign_id: campaign.id,
          version: 1,
          body:
            year === 2025
              ? cal(NEON_2025_V1_SCALE, 'Demo neon calibration v1 (2025): momentum scale from the old lens voltages.')
              : cal(1, 'Demo neon calibration v1 (2026): momentum scale checked on ATI rings after realignment.'),
          note: year === 2025 ? 'Calibration of the 2025 campaign.' : 'Calibration after the 2026 realignment.',
          locked_at: null,
          approved_at: approvedAt,
          ...approved,
        },
        transaction: t,
      });
      if (year === 2025) {
        await models.DetectorCalibrationVersion.findOrCreate({
          where: { campaign_id: campaign.id, version: 2 },
          defaults: {
            campaign_id: campaign.id,
            version: 2,
            body: cal(1, 'Demo neon calibration v2 (2025 data): momentum scale corrected by 2.5 % from ATI rings.'),
            note: 'Momentum scale corrected (2.5 % smaller per pixel); approved in 2026 for re-reduction.',
            locked_at: null,
            approved_at: new Date(Date.UTC(2026, 9, 20, 11)),
            ...approved,
          },
          transaction: t,
        });
      }
      const [set] = await models.AnalysisSettingsVersion.findOrCreate({
        where: { campaign_id: campaign.id, version: 1 },
        defaults: {
          campaign_id: campaign.id,
          version: 1,
          body: settings.value,
          note: 'Initial demo settings.',
          locked_at: null,
          approved_at: approvedAt,
          ...approved,
        },
        transaction: t,
      });
      if (campaign.current_calibration_id == null || campaign.current_settings_id == null) {
        await campaign.update(
          {
            current_calibration_id: campaign.current_calibration_id ?? v1.id,
            current_settings_id: campaign.current_settings_id ?? set.id,
          },
          { transaction: t },
        );
      }
      const title = FILES.find((f) => f.year === year)!.shift;
      const openedAt = year === 2025 ? new Date(Date.UTC(2025, 10, 18, 8)) : new Date(Date.UTC(2026, 10, 17, 8));
      const [shift] = await models.Shift.findOrCreate({
        where: { campaign_id: campaign.id, title },
        defaults: {
          team_id: team.id,
          campaign_id: campaign.id,
          title,
          status: 'closed',
          opened_by: operator.id,
          opened_at: openedAt,
          closed_by: operator.id,
          closed_at: new Date(openedAt.getTime() + 10 * 3_600_000),
          receipt_sent_at: null,
        },
        transaction: t,
      });
      return { campaign, shift };
    });
  const years = { 2025: await setUp(2025), 2026: await setUp(2026) };

  // files: generated, uploaded, reduced by the worker
  const plan = await planNeonFiles();
  const actor = await getActorByUserId({ userId: operator.id });
  if (!actor) throw new Error('the demo operator is inactive');
  const { writeDemoFile } = await import('./demo-scans');
  const { completeUpload, startUpload } = await import('@/lib/ingest/service');
  const { startUploadBody } = await import('@/lib/ingest/schemas');
  const dir = mkdtempSync(path.join(tmpdir(), 'lobeline-demo-neon-'));
  const scanIds = new Map<string, number>();
  let generated = 0;
  try {
    for (const [nth, f] of plan.entries()) {
      const { shift } = years[f.year];
      const done = await models.Upload.findOne({
        where: { shift_id: shift.id, file_name: f.fileName, status: 'completed' },
      });
      if (done?.scan_id) {
        scanIds.set(f.fileName, done.scan_id);
        continue;
      }
      const local = path.join(dir, f.fileName);
      const startTime = new Date(shift.opened_at.getTime() + (60 + 40 * (nth % 3)) * 60_000).toISOString();
      await writeDemoFile(f, local, startTime);
      const bytes = readFileSync(local);
      const sha256 = createHash('sha256').update(bytes).digest('hex');
      const ticket = await startUpload(
        actor,
        startUploadBody.parse({
          shiftId: shift.id,
          fileName: f.fileName,
          sizeBytes: bytes.length,
          lastModifiedMs: LAST_MODIFIED_MS,
        }),
        { intoClosedShift: true },
      );
      if (ticket.mode !== 'single') throw new Error(`${f.fileName}: a demo file must fit in one presigned PUT`);
      const put = await fetch(ticket.url, { method: 'PUT', body: bytes });
      if (!put.ok) throw new Error(`${f.fileName}: the presigned PUT answered ${put.status}`);
      const outcome = await completeUpload(actor, ticket.uploadId, sha256, undefined, { intoClosedShift: true });
      scanIds.set(f.fileName, outcome.scanId);
      generated++;
      console.log(`  ${f.fileName}: ${(bytes.length / 1e6).toFixed(1)} MB, ${outcome.outcome}`);
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }

  const tStart = performance.now();
  const waitS = Number(process.env.DEMO_SCANS_WAIT_S) >= 0 ? Number(process.env.DEMO_SCANS_WAIT_S) : 240;
  const t0 = performance.now();
  const waitFor = async (what: string, pending: () => Promise<number>): Promise<boolean> => {
    for (;;) {
      const n = await pending();
      if (n === 0) return true;
      if (performance.now() - t0 > waitS * 1000) {
        console.log(`demo neon: ${n} ${what} still waiting after ${waitS} s (the worker goes on in the background)`);
        return false;
      }
      await new Promise((r) => setTimeout(r, 1000));
    }
  };
  const ids = [...scanIds.values()];
  const reduced = await waitFor('scan(s)', async () =>
    models.Scan.count({ where: { id: ids, status: ['uploaded', 'queued', 'reducing'] } }),
  );

  // calibration v2 of 2025: current from now on, and one 2025 file re-reduced with it
  const c2025 = years[2025].campaign;
  const v2 = await models.DetectorCalibrationVersion.findOne({ where: { campaign_id: c2025.id, version: 2 } });
  const again = scanIds.get(REREDUCED_WITH_V2);
  if (reduced && v2 && again) {
    await c2025.reload();
    if (c2025.current_calibration_id !== v2.id) await c2025.update({ current_calibration_id: v2.id });
    const had = await models.ReductionJob.findOne({ where: { scan_id: again, calibration_id: v2.id } });
    if (!had) {
      const { enqueueReductionForScan } = await import('@/lib/queue/enqueue');
      const out = await enqueueReductionForScan(again, { calibrationId: v2.id, requestedBy: analyst.id });
      if (out.queued) {
        await waitFor('re-reduction', async () =>
          models.ReductionJob.count({ where: { id: out.reductionJobId, status: ['queued', 'running'] } }),
        );
      } else console.log(`demo neon: the re-reduction with v2 was not queued: ${out.reason}`);
    }
  }

  // the PI's kept comparison
  const { comparisonSpecSchema } = await import('@/lib/comparison/spec');
  const { createSavedComparison } = await import('@/lib/db/queries/comparison');
  let saved = await models.SavedComparison.findOne({ where: { team_id: team.id, title: COMPARISON_TITLE } });
  if (!saved) {
    const spec = comparisonSpecSchema.parse({
      selection: { campaignIds: [c2025.id, years[2026].campaign.id] },
      axes: { y: 'offset', x: 'radius_intensity' },
      seriesBy: 'campaign',
      models: ['trajectory'],
    });
    const dto = await createSavedComparison({
      teamId: team.id,
      title: COMPARISON_TITLE,
      note:
        'Demo: invented scans from the project’s generator, not measurements. The 2026 offsets were generated on the ' +
        `trajectory model, the 2025 offsets ${NEON_2025_EXCESS_DEG}° above it; the 2025 calibration v1 has its ` +
        'momentum scale 2.5 % too large (v2 corrects it; one 2025 scan is re-reduced with v2). The ensemble is left ' +
        'unticked: ticking it queues a run of about a minute and a half, and for neon its curve scatters by about a ' +
        'degree between intensities, as much as the difference asked about.',
      spec,
      userId: pi.id,
    });
    saved = await models.SavedComparison.findOne({ where: { slug: dto.id } });
  }
  console.log(
    `demo neon: ${ids.length} files (${generated} new${generated ? `, reduced in ${((performance.now() - tStart) / 1000).toFixed(1)} s` : ''}), comparison kept at /comparisons/${saved?.slug ?? '?'}`,
  );
  return 0;
}

if (invokedDirectly) {
  main()
    .then(async (code) => {
      const { closeSequelize } = await import('@/lib/db');
      await closeSequelize().catch(() => undefined);
      process.exit(code);
    })
    .catch(async (err: unknown) => {
      console.error(`Demo neon campaigns failed: ${(err as Error)?.message ?? String(err)}`);
      if (process.env.DEMO_SCANS_DEBUG) console.error(err);
      process.exit(1);
    });
}
