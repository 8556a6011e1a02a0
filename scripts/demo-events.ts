// tsx scripts/demo-events.ts — the event-mode campaign of the fictional Harbor Point Ultrafast Lab (idempotent). Run by
// scripts/start.sh after the demo scans (dev instance); needs the seed (scripts/seed.ts) first.
//
// Creates the campaign "He 800 nm event mode" of the angular streaking group with an approved calibration v1 (the
// demo calibration plus the spectrometer's t₀ from an invented timing calibration) and approved settings v1 (laser
// along +y, ±0.15 a.u. gate), a closed shift, and one generated event file of about 6 × 10⁵ events (FORMATS §1.1;
// reduction/synth/event-file.ts) uploaded through the same ingest as a browser upload, which queues its reduction.
// All values are invented demo values, not a measurement.
import { createHash } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';

const invokedDirectly = !!process.argv[1] && path.resolve(process.argv[1]) === path.resolve(import.meta.filename);
if (invokedDirectly) await import('./server-only-shim');

const CAMPAIGN = 'He 800 nm event mode';
const SHIFT = 'Reaction-microscope commissioning';
const FILE_NAME = 'hp-he800-remi-I2-4.h5';
/** Invented spectrometer of the demo reaction microscope (the calibration repeats t₀ from its timing calibration). */
const SPECTROMETER = {
  acceleration_length_m: 0.1,
  drift_length_m: 0,
  electric_field_v_per_m: 2000,
  magnetic_field_t: 1.0e-3,
  t0_ns: 14.2,
  detector_center_mm: [0.35, -0.2] as [number, number],
};

export async function main(): Promise<number> {
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

  const calibration = parseCalibration({
    ...DEMO_CALIBRATION_INPUT,
    spectrometer: { t0: SPECTROMETER.t0_ns },
    note: 'Demo event-mode calibration v1: t₀ from the (invented) timing calibration, used over the file’s.',
  });
  const settings = parseSettings({
    events: { laser_axis: '+y', gate_au: { axis: 'laser', range: [-0.15, 0.15] }, chunk_events: 250_000 },
    note: 'Demo event-mode settings v1.',
  });
  if (!calibration.ok || !settings.ok) throw new Error('demo event-mode versions are invalid');

  const shift = await db.transaction(async (t) => {
    const [campaign] = await models.Campaign.findOrCreate({
      where: { team_id: team.id, name: CAMPAIGN },
      defaults: {
        team_id: team.id,
        name: CAMPAIGN,
        target: 'He',
        wavelength_nm: 800,
        experiment_kind: 'angular_streaking',
        description:
          'Offset angle versus intensity in helium recorded with the delay-line detector of the reaction microscope (event lists, not images).',
        created_by: analyst.id,
        current_calibration_id: null,
        current_settings_id: null,
        embargo_until: null,
      },
      transaction: t,
    });
    const approved = {
      status: 'approved' as const,
      created_by: analyst.id,
      approved_by: pi.id,
      approved_at: new Date(),
    };
    const [cal] = await models.DetectorCalibrationVersion.findOrCreate({
      where: { campaign_id: campaign.id, version: 1 },
      defaults: {
        campaign_id: campaign.id,
        version: 1,
        body: calibration.value,
        note: 'Initial demo calibration.',
        locked_at: null,
        ...approved,
      },
      transaction: t,
    });
    const [set] = await models.AnalysisSettingsVersion.findOrCreate({
      where: { campaign_id: campaign.id, version: 1 },
      defaults: {
        campaign_id: campaign.id,
        version: 1,
        body: settings.value,
        note: 'Initial demo settings.',
        locked_at: null,
        ...approved,
      },
      transaction: t,
    });
    if (campaign.current_calibration_id == null || campaign.current_settings_id == null) {
      await campaign.update(
        {
          current_calibration_id: campaign.current_calibration_id ?? cal.id,
          current_settings_id: campaign.current_settings_id ?? set.id,
        },
        { transaction: t },
      );
    }
    const openedAt = new Date(Date.now() - 3 * 86_400_000);
    const [s] = await models.Shift.findOrCreate({
      where: { campaign_id: campaign.id, title: SHIFT },
      defaults: {
        team_id: team.id,
        campaign_id: campaign.id,
        title: SHIFT,
        status: 'closed',
        opened_by: operator.id,
        opened_at: openedAt,
        closed_by: operator.id,
        closed_at: new Date(openedAt.getTime() + 8 * 3_600_000),
        receipt_sent_at: null,
      },
      transaction: t,
    });
    return s;
  });

  const done = await models.Upload.findOne({
    where: { shift_id: shift.id, file_name: FILE_NAME, status: 'completed' },
  });
  if (done?.scan_id) {
    console.log('The demo event file is already catalogued; nothing uploaded.');
    return 0;
  }
  const actor = await getActorByUserId({ userId: operator.id });
  if (!actor) throw new Error('the demo operator is inactive');
  const { loadH5wasmNode } = await import('@/reduction/hdf5/node');
  const { planScan } = await import('@/reduction/synth/model');
  const { writeSynthEventScan } = await import('@/reduction/synth/event-file');
  const { completeUpload, startUpload } = await import('@/lib/ingest/service');
  const { startUploadBody } = await import('@/lib/ingest/schemas');
  const dir = mkdtempSync(path.join(tmpdir(), 'lobeline-demo-events-'));
  try {
    const local = path.join(dir, FILE_NAME);
    const plan = planScan({
      kind: 'angular_streaking',
      target: 'He',
      steps: 3,
      size: 128,
      counts: 2e5,
      offsetDeg: 6,
      seed: 8801,
      intensityMinWcm2: 2e14,
      intensityMaxWcm2: 4e14,
    });
    const startTime = new Date(shift.opened_at.getTime() + 90 * 60_000).toISOString();
    writeSynthEventScan(
      await loadH5wasmNode(),
      local,
      plan,
      { spectrometer: SPECTROMETER, dtype: 'float32' },
      {
        title: 'He 800 nm, ε = 0.87: event-mode intensity scan 2–4 × 10¹⁴ W/cm² (reaction microscope)',
        comment:
          'Harbor Point Ultrafast Lab demo event list: synthetic events with invented values, not a measurement.',
      },
      startTime,
    );
    const bytes = readFileSync(local);
    const sha256 = createHash('sha256').update(bytes).digest('hex');
    const ticket = await startUpload(
      actor,
      startUploadBody.parse({ shiftId: shift.id, fileName: FILE_NAME, sizeBytes: bytes.length, lastModifiedMs: 0 }),
      { intoClosedShift: true },
    );
    if (ticket.mode !== 'single') throw new Error('the demo event file must fit in one presigned PUT');
    const put = await fetch(ticket.url, { method: 'PUT', body: bytes });
    if (!put.ok) throw new Error(`the presigned PUT answered ${put.status}`);
    const outcome = await completeUpload(actor, ticket.uploadId, sha256, undefined, { intoClosedShift: true });
    console.log(`  ${FILE_NAME}: ${(bytes.length / 1e6).toFixed(1)} MB, ${outcome.outcome}`);
    return outcome.outcome === 'quarantined' ? 1 : 0;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

if (invokedDirectly) {
  main()
    .then(async (code) => {
      const { closeSequelize } = await import('@/lib/db');
      await closeSequelize().catch(() => undefined);
      process.exit(code);
    })
    .catch(async (err: unknown) => {
      console.error(`Demo event campaign failed: ${(err as Error)?.message ?? String(err)}`);
      process.exit(1);
    });
}
