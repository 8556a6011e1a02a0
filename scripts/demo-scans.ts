// tsx scripts/demo-scans.ts — demo scan files for the fictional Harbor Point Ultrafast Lab (idempotent: a demo file
// already catalogued in its shift is skipped). Run by scripts/start.sh for the dev instance once the web server and
// the reduction worker are up; never by scripts/test.sh. Needs the seed (scripts/seed.ts) first.
//
// Each file is made with the synthetic generator (reduction/synth, as scripts/make-example.ts does) for the seeded
// 512 × 512 px demo calibration, then goes through the same ingest as a browser upload (lib/ingest/service.ts):
// startUpload picks the object key, the bytes are PUT to the presigned URL, completeUpload checks size and SHA-256,
// runs the reader's validation, writes the raw-file and scan rows in one transaction and queues accepted scans for
// reduction; the one deliberately broken file is quarantined with the reader's reasons. Files go to the seeded past
// shifts (and the open argon night shift), uploaded by the team member who ran the shift.
// Then it waits (at most DEMO_SCANS_WAIT_S seconds, default 240) until the worker has reduced them.
// DEMO_SCANS_DEBUG=1 prints the stack of a failure.
// All values are invented demo values.
import { createHash } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import type { Actor } from '@/lib/policy';
import type { ExperimentKind } from '@/reduction/formats';
import type { SynthOptions } from '@/reduction/synth/model';
import type { BrokenKind, SynthText } from '@/reduction/synth/scan-file';

const invokedDirectly = !!process.argv[1] && path.resolve(process.argv[1]) === path.resolve(import.meta.filename);
// The data layer imports 'server-only' (a marker that throws outside Next's server bundles); for this Node process
// it resolves to an empty module. Registered before the data layer is imported (dynamically, below).
if (invokedDirectly) await import('./server-only-shim');

// DEMO FILES //

const OPERATOR = 'operator@harbor-point.example';
const PHASE_ANALYST = 'phase-analyst@harbor-point.example';
/** The file's modification time as a browser would report it (fixed, so an interrupted run resumes its upload). */
const LAST_MODIFIED_MS = Date.UTC(2026, 2, 14, 9, 30, 0);

export interface DemoFile {
  fileName: string;
  campaign: string;
  shift: string;
  uploader: string;
  options: Partial<SynthOptions> & { kind: ExperimentKind };
  broken?: BrokenKind;
  text: Required<SynthText>;
}

const NOTE = 'Harbor Point Ultrafast Lab demo scan: synthetic counts with invented values, not a measurement.';

export const DEMO_FILES: DemoFile[] = [
  {
    fileName: 'hp-he800-align-I2-5.h5',
    campaign: 'He 800 nm elliptical',
    shift: 'Intensity scan, first alignment',
    uploader: OPERATOR,
    options: {
      kind: 'angular_streaking',
      target: 'He',
      wavelengthNm: 800,
      ellipticity: 0.87,
      steps: 5,
      intensityMinWcm2: 2e14,
      intensityMaxWcm2: 5e14,
      offsetDeg: 6,
      offsetIntensityExponent: 0.08, // §10.7, He 800 nm: 6.29° → 5.63° from 2 to 8 × 10¹⁴ W/cm²
      seed: 8101,
      compression: 'gzip',
    },
    text: {
      title: 'He 800 nm, ε = 0.87: intensity scan 2–5 × 10¹⁴ W/cm², jet at 2 bar after first alignment',
      comment: `${NOTE} First alignment of the VMI-2 lens after venting; MCP at 1.6 kV.`,
    },
  },
  {
    fileName: 'hp-he800-align-I3-7.h5',
    campaign: 'He 800 nm elliptical',
    shift: 'Intensity scan, first alignment',
    uploader: OPERATOR,
    options: {
      kind: 'angular_streaking',
      target: 'He',
      wavelengthNm: 800,
      ellipticity: 0.87,
      steps: 5,
      intensityMinWcm2: 3e14,
      intensityMaxWcm2: 7e14,
      offsetDeg: 4.5,
      offsetIntensityExponent: 0.08, // §10.7, He 800 nm: 6.29° → 5.63° from 2 to 8 × 10¹⁴ W/cm²
      counts: 3e5,
      seed: 8102,
      compression: 'none',
    },
    text: {
      title: 'He 800 nm, ε = 0.87: intensity scan 3–7 × 10¹⁴ W/cm², iris opened one notch',
      comment: `${NOTE} Higher intensity range; count rate kept below one hit per shot.`,
    },
  },
  {
    fileName: 'hp-he800-mcp-gain-I1.5-4.h5',
    campaign: 'He 800 nm elliptical',
    shift: 'Intensity scan, repeat with new MCP gain',
    uploader: OPERATOR,
    options: {
      kind: 'angular_streaking',
      target: 'He',
      wavelengthNm: 800,
      ellipticity: 0.87,
      steps: 5,
      intensityMinWcm2: 1.5e14,
      intensityMaxWcm2: 4e14,
      offsetDeg: 7.5,
      offsetIntensityExponent: 0.08, // §10.7, He 800 nm: 6.29° → 5.63° from 2 to 8 × 10¹⁴ W/cm²
      counts: 1.5e5,
      seed: 8103,
      compression: 'gzip',
    },
    text: {
      title: 'He 800 nm, ε = 0.87: intensity scan 1.5–4 × 10¹⁴ W/cm² with the new MCP gain',
      comment: `${NOTE} Repeat of the first-alignment scan after raising the MCP gain; phosphor at 4.5 kV.`,
    },
  },
  {
    fileName: 'hp-he800-mcp-gain-no-wavelength.h5',
    campaign: 'He 800 nm elliptical',
    shift: 'Intensity scan, repeat with new MCP gain',
    uploader: OPERATOR,
    options: {
      kind: 'angular_streaking',
      target: 'He',
      wavelengthNm: 800,
      ellipticity: 0.87,
      steps: 3,
      offsetDeg: 6,
      seed: 8104,
      compression: 'gzip',
    },
    broken: 'missing_wavelength',
    text: {
      title: 'He 800 nm, ε = 0.87: short check scan, written while the acquisition config was being edited',
      comment: `${NOTE} This file lacks the laser wavelength on purpose, so the quarantine has an example.`,
    },
  },
  {
    fileName: 'hp-ar800-night-I1-3.h5',
    campaign: 'Ar 800 nm elliptical',
    shift: 'Night shift, argon jet',
    uploader: OPERATOR,
    options: {
      kind: 'angular_streaking',
      target: 'Ar',
      wavelengthNm: 800,
      ellipticity: 0.87,
      steps: 5,
      intensityMinWcm2: 1e14,
      intensityMaxWcm2: 3e14,
      // §10.7's ensemble for Ar at 800 nm: 13.15° at 1×10¹⁴ and 11.85° at 2×10¹⁴ W/cm² (≈ I^−0.15)
      offsetDeg: 13.15,
      offsetRefIntensityWcm2: 1e14,
      offsetIntensityExponent: 0.15,
      shrink: 0.05,
      seed: 8201,
      compression: 'gzip',
    },
    text: {
      title: 'Ar 800 nm, ε = 0.87: intensity scan 1–3 × 10¹⁴ W/cm², argon reference for the Coulomb correction',
      comment: `${NOTE} Same optics as the helium campaign; argon jet at 0.5 bar.`,
    },
  },
  {
    fileName: 'hp-ne1300-bicircular-h+.h5',
    campaign: 'Ne 1300 nm bicircular',
    shift: 'Bicircular, helicity check',
    uploader: PHASE_ANALYST,
    options: {
      kind: 'bicircular',
      target: 'Ne',
      wavelengthNm: 1300,
      helicity: 1,
      steps: 4,
      fieldRatio: 1,
      intensityMinWcm2: 2e14,
      intensityMaxWcm2: 4e14,
      seed: 8301,
      compression: 'gzip',
    },
    text: {
      title: 'Ne 1300 + 650 nm counter-rotating fields, h₁ = +1: helicity check, field ratio 1',
      comment: `${NOTE} Quarter-wave plates set for counter-rotating helicities; threefold pattern expected.`,
    },
  },
  {
    fileName: 'hp-ar800-400-wedge-14.h5',
    campaign: 'Ar 800 + 400 nm phase scan',
    shift: 'Phase scan, wedge pair calibration',
    uploader: PHASE_ANALYST,
    options: {
      kind: 'two_color_phase',
      target: 'Ar',
      wavelengthNm: 800,
      steps: 14,
      periods: 2,
      fieldRatio: 0.1,
      seed: 8401,
      compression: 'gzip',
    },
    text: {
      title: 'Ar 800 + 400 nm, parallel linear polarizations: relative phase over two periods, 14 wedge positions',
      comment: `${NOTE} Wedge-pair calibration run; field ratio 0.1.`,
    },
  },
];

/** Size of the demo detector (the seeded demo calibration v1 is centred on it). */
export const DEMO_DETECTOR_PX = 512;

/** Writes one demo file exactly as the demo start does (the integration tests make the same files). */
export async function writeDemoFile(f: DemoFile, out: string, startTime?: string): Promise<void> {
  const { loadH5wasmNode } = await import('@/reduction/hdf5/node');
  const { planScan } = await import('@/reduction/synth/model');
  const { writeSynthScan } = await import('@/reduction/synth/scan-file');
  const rt = await loadH5wasmNode();
  writeSynthScan(
    rt,
    out,
    planScan({ size: DEMO_DETECTOR_PX, dtype: 'float32', ...f.options }),
    f.broken ?? null,
    f.text,
    startTime,
  );
}

// MAIN //

const seconds = (t0: number) => ((performance.now() - t0) / 1000).toFixed(1);

async function main(): Promise<number> {
  const { loadDotEnv } = await import('./seed');
  loadDotEnv();
  const { getEnv } = await import('@/lib/env');
  getEnv();
  const { getDb } = await import('@/lib/db');
  getDb(); // initialises the models
  const { getActorByUserId } = await import('@/lib/db/queries/accounts');
  const { Campaign, Scan, Shift, Upload, User } = await import('@/models');
  // The generator and the ingest are loaded only when a demo file is missing (a later start skips them).
  const load = async () => ({
    ...(await import('@/lib/ingest/schemas')),
    ...(await import('@/lib/ingest/service')),
  });
  let mods: Awaited<ReturnType<typeof load>> | null = null;

  const actors = new Map<string, Actor>();
  const actorFor = async (email: string): Promise<Actor> => {
    const known = actors.get(email);
    if (known) return known;
    const user = await User.findOne({ where: { email } });
    const actor = user ? await getActorByUserId({ userId: user.id }) : null;
    if (!actor) throw new Error(`demo user ${email} is missing or inactive; run scripts/seed.ts first`);
    actors.set(email, actor);
    return actor;
  };

  const dir = mkdtempSync(path.join(tmpdir(), 'lobeline-demo-scans-'));
  const scanIds: number[] = [];
  let generated = 0;
  let genMs = 0;
  let ingestMs = 0;
  try {
    for (const f of DEMO_FILES) {
      const campaign = await Campaign.findOne({ where: { name: f.campaign } });
      const shift = campaign ? await Shift.findOne({ where: { campaign_id: campaign.id, title: f.shift } }) : null;
      if (!campaign || !shift) throw new Error(`seeded shift "${f.shift}" of "${f.campaign}" not found; run the seed`);
      const done = await Upload.findOne({ where: { shift_id: shift.id, file_name: f.fileName, status: 'completed' } });
      if (done?.scan_id) {
        scanIds.push(done.scan_id);
        continue;
      }
      const actor = await actorFor(f.uploader);
      mods ??= await load();
      const { completeUpload, startUpload, startUploadBody } = mods;

      let t0 = performance.now();
      const local = path.join(dir, f.fileName);
      // recorded during its shift: an hour after the shift opened, then 40 minutes per earlier file of that shift
      const nth = DEMO_FILES.filter((d) => d.shift === f.shift).indexOf(f);
      const startTime = new Date(shift.opened_at.getTime() + (60 + 40 * nth) * 60_000).toISOString();
      await writeDemoFile(f, local, startTime);
      const bytes = readFileSync(local);
      const sha256 = createHash('sha256').update(bytes).digest('hex');
      genMs += performance.now() - t0;
      generated++;

      t0 = performance.now();
      const body = startUploadBody.parse({
        shiftId: shift.id,
        fileName: f.fileName,
        sizeBytes: bytes.length,
        lastModifiedMs: LAST_MODIFIED_MS,
      });
      const ticket = await startUpload(actor, body, { intoClosedShift: true });
      if (ticket.mode !== 'single') throw new Error(`${f.fileName}: a demo file must fit in one presigned PUT`);
      const put = await fetch(ticket.url, { method: 'PUT', body: bytes });
      if (!put.ok) throw new Error(`${f.fileName}: the presigned PUT answered ${put.status} ${await put.text()}`);
      const outcome = await completeUpload(actor, ticket.uploadId, sha256, undefined, { intoClosedShift: true });
      ingestMs += performance.now() - t0;
      scanIds.push(outcome.scanId);
      const why = outcome.reasons.length ? ` (${outcome.reasons.join('; ')})` : '';
      console.log(`  ${f.fileName}: ${(bytes.length / 1e6).toFixed(1)} MB, ${outcome.outcome}${why}`);
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  if (generated) {
    console.log(
      `Generated ${generated} demo file(s) in ${(genMs / 1000).toFixed(1)} s; uploaded and verified in ${(ingestMs / 1000).toFixed(1)} s.`,
    );
  } else {
    console.log(`All ${DEMO_FILES.length} demo files are already catalogued; nothing uploaded.`);
  }

  // Wait for the worker.
  const asked = process.env.DEMO_SCANS_WAIT_S ? Number(process.env.DEMO_SCANS_WAIT_S) : Number.NaN;
  const waitS = Number.isFinite(asked) && asked >= 0 ? asked : 240;
  const t0 = performance.now();
  let last = '';
  for (;;) {
    const rows = await Scan.findAll({ where: { id: scanIds }, attributes: ['id', 'status'], raw: true });
    const count = (s: string) => rows.filter((r) => r.status === s).length;
    const pending = count('uploaded') + count('queued') + count('reducing');
    const line = `demo scans: ${count('reduced')} reduced, ${count('quarantined')} quarantined${count('failed') ? `, ${count('failed')} failed` : ''}`;
    if (pending === 0) {
      console.log(`${line}${generated ? ` (reductions waited for ${seconds(t0)} s)` : ''}`);
      return count('failed') ? 1 : 0;
    }
    if (line !== last) console.log(`  ${line}, ${pending} waiting for the worker…`);
    last = line;
    if (performance.now() - t0 > waitS * 1000) {
      console.log(`${line}, ${pending} still waiting after ${waitS} s (the worker goes on in the background).`);
      return 0;
    }
    await new Promise((r) => setTimeout(r, 1000));
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
      console.error(`Demo scans failed: ${(err as Error)?.message ?? String(err)}`);
      if (process.env.DEMO_SCANS_DEBUG) console.error(err);
      process.exit(1);
    });
}
