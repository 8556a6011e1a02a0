// tsx scripts/seed.ts — the demo data of the fictional Harbor Point Ultrafast Lab (idempotent; run it again at any
// time). Creates two teams, six demo accounts (password `lobeline-demo`), campaigns on He, Ne and Ar at 800 nm and
// 1300 nm with a few shifts, and an approved detector calibration v1 and analysis settings v1 per campaign.
// All numbers are invented demo values. Uses the schema of the migrations (run `tsx scripts/migrate.ts up` first).
// Reads `.env` from the repo root for variables not already set (skipped when LOBELINE_INSTANCE=test).
import { existsSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import { parseEnv as parseDotEnv } from 'node:util';
import bcrypt from 'bcryptjs';
import { closeSequelize, getDb } from '@/lib/db';
import { REPO_ROOT } from '@/lib/db/migrator';
import { EnvError } from '@/lib/env';
import type { FacilityRole, TeamRole } from '@/lib/policy';
import {
  AnalysisSettingsVersion,
  Campaign,
  DetectorCalibrationVersion,
  FacilityRoleGrant,
  Membership,
  Shift,
  Team,
  User,
} from '@/models';
import { type ExperimentKind, parseCalibration, parseSettings } from '@/reduction/formats';

export const DEMO_PASSWORD = 'lobeline-demo';

export function loadDotEnv(): void {
  if (process.env.LOBELINE_INSTANCE === 'test') return;
  const file = path.join(REPO_ROOT, '.env');
  if (!existsSync(file)) return;
  for (const [k, v] of Object.entries(parseDotEnv(readFileSync(file, 'utf8')))) {
    if (process.env[k] === undefined) process.env[k] = v;
  }
}

// DEMO DATA //

/** Detector calibration v1 of every demo campaign (invented values; the demo detector is 512 × 512 px). */
export const DEMO_CALIBRATION_INPUT = {
  center_px: [255.5, 255.5],
  momentum_per_pixel_au: 2 / (512 / 2 - 12),
  rotation_deg: 0,
  note: 'Demo calibration v1 (invented values for the Harbor Point demo).',
};

const TEAMS = [
  {
    slug: 'attoclock',
    name: 'Angular streaking group',
    description: 'Offset angles of photoelectron lobes in close-to-circular fields (the attoclock method).',
  },
  {
    slug: 'phasemap',
    name: 'Two-colour phase group',
    description: 'Phase-resolved yields in ω–2ω and counter-rotating bicircular fields.',
  },
] as const;

type Slug = (typeof TEAMS)[number]['slug'];

export const DEMO_USERS: {
  email: string;
  name: string;
  memberships: [Slug, TeamRole][];
  facility: FacilityRole[];
  summary: string;
}[] = [
  {
    email: 'operator@harbor-point.example',
    name: 'Ines Halvorsen',
    memberships: [['attoclock', 'operator']],
    facility: [],
    summary: 'operator in attoclock',
  },
  {
    email: 'analyst@harbor-point.example',
    name: 'Dev Aranha',
    memberships: [['attoclock', 'analyst']],
    facility: [],
    summary: 'analyst in attoclock',
  },
  {
    email: 'pi@harbor-point.example',
    name: 'Keiko Marsh',
    memberships: [
      ['attoclock', 'pi'],
      ['phasemap', 'pi'],
    ],
    facility: [],
    summary: 'PI in attoclock and phasemap',
  },
  {
    email: 'phase-analyst@harbor-point.example',
    name: 'Luca Ferrante',
    memberships: [['phasemap', 'analyst']],
    facility: [],
    summary: 'analyst in phasemap',
  },
  {
    email: 'steward@harbor-point.example',
    name: 'Noor Achterberg',
    memberships: [],
    facility: ['steward'],
    summary: 'data steward (facility)',
  },
  {
    email: 'admin@harbor-point.example',
    name: 'Sam Whitfield',
    memberships: [],
    facility: ['admin'],
    summary: 'administrator (facility)',
  },
];

const CAMPAIGNS: {
  team: Slug;
  name: string;
  target: string;
  wavelengthNm: number;
  kind: ExperimentKind;
  description: string;
  shifts: { title: string; daysAgo: number; open: boolean }[];
}[] = [
  {
    team: 'attoclock',
    name: 'He 800 nm elliptical',
    target: 'He',
    wavelengthNm: 800,
    kind: 'angular_streaking',
    description: 'Offset angle versus intensity in helium, ellipticity 0.87, 6 fs pulses.',
    shifts: [
      { title: 'Intensity scan, first alignment', daysAgo: 9, open: false },
      { title: 'Intensity scan, repeat with new MCP gain', daysAgo: 2, open: false },
    ],
  },
  {
    team: 'attoclock',
    name: 'Ar 800 nm elliptical',
    target: 'Ar',
    wavelengthNm: 800,
    kind: 'angular_streaking',
    description: 'Argon reference for the Coulomb correction; same optics as the helium campaign.',
    shifts: [{ title: 'Night shift, argon jet', daysAgo: 0, open: true }],
  },
  {
    team: 'attoclock',
    name: 'Ne 1300 nm near-circular',
    target: 'Ne',
    wavelengthNm: 1300,
    kind: 'angular_streaking',
    description: 'Neon with the OPA idler at 1300 nm, ellipticity 0.95.',
    shifts: [{ title: 'OPA commissioning', daysAgo: 5, open: false }],
  },
  {
    team: 'phasemap',
    name: 'Ar 800 + 400 nm phase scan',
    target: 'Ar',
    wavelengthNm: 800,
    kind: 'two_color_phase',
    description: 'ω–2ω relative-phase scans over two periods, parallel linear polarizations.',
    shifts: [
      { title: 'Phase scan, wedge pair calibration', daysAgo: 7, open: false },
      { title: 'Phase scan, field ratio 0.1', daysAgo: 1, open: true },
    ],
  },
  {
    team: 'phasemap',
    name: 'Ne 1300 nm bicircular',
    target: 'Ne',
    wavelengthNm: 1300,
    kind: 'bicircular',
    description: 'Counter-rotating ω + 2ω fields, threefold lobe pattern.',
    shifts: [{ title: 'Bicircular, helicity check', daysAgo: 4, open: false }],
  },
  {
    team: 'phasemap',
    name: 'He 1300 nm phase scan',
    target: 'He',
    wavelengthNm: 1300,
    kind: 'two_color_phase',
    description: 'Helium reference for the phase-of-maximum-yield maps.',
    shifts: [],
  },
];

// MAIN //

async function seed(): Promise<void> {
  const sequelize = getDb();
  const cost = Number(process.env.LOBELINE_BCRYPT_COST) >= 4 ? Number(process.env.LOBELINE_BCRYPT_COST) : 12;

  await sequelize.transaction(async (t) => {
    const teamIds = new Map<Slug, number>();
    for (const spec of TEAMS) {
      const [team] = await Team.findOrCreate({
        where: { slug: spec.slug },
        defaults: { slug: spec.slug, name: spec.name, description: spec.description },
        transaction: t,
      });
      await team.update({ name: spec.name, description: spec.description }, { transaction: t });
      teamIds.set(spec.slug, team.id);
    }

    const userIds = new Map<string, number>();
    for (const spec of DEMO_USERS) {
      let user = await User.findOne({ where: { email: spec.email }, transaction: t });
      if (!user) {
        user = await User.create(
          {
            email: spec.email,
            name: spec.name,
            password_hash: await bcrypt.hash(DEMO_PASSWORD, cost),
            notification_prefs: null,
            last_sign_in_at: null,
          },
          { transaction: t },
        );
      } else {
        // Keep the demo sign-ins working: reactivate and restore the demo password if it was changed.
        const ok = user.password_hash ? await bcrypt.compare(DEMO_PASSWORD, user.password_hash) : false;
        await user.update(
          {
            name: spec.name,
            is_active: true,
            ...(ok ? {} : { password_hash: await bcrypt.hash(DEMO_PASSWORD, cost) }),
          },
          { transaction: t },
        );
      }
      userIds.set(spec.email, user.id);
      for (const [slug, role] of spec.memberships) {
        const teamId = teamIds.get(slug)!;
        const [m] = await Membership.findOrCreate({
          where: { user_id: user.id, team_id: teamId },
          defaults: { user_id: user.id, team_id: teamId, role },
          transaction: t,
        });
        if (m.role !== role) await m.update({ role }, { transaction: t });
      }
      for (const role of spec.facility) {
        await FacilityRoleGrant.findOrCreate({
          where: { user_id: user.id, role },
          defaults: { user_id: user.id, role },
          transaction: t,
        });
      }
    }

    const operatorId = userIds.get('operator@harbor-point.example')!;
    const analystId = userIds.get('analyst@harbor-point.example')!;
    const piId = userIds.get('pi@harbor-point.example')!;
    const phaseAnalystId = userIds.get('phase-analyst@harbor-point.example')!;

    // Invented demo calibration: a 512 × 512 px detector centred at (255.5, 255.5) whose scale is the one the example
    // generator uses (reduction/synth/model.ts synthCalibration: 2 a.u. at 12 px inside the frame edge), so files
    // made with `npm run make-example -- --size 512` reduce to the intensity they were generated with.
    const calibration = parseCalibration(DEMO_CALIBRATION_INPUT);
    if (!calibration.ok) throw new Error(`demo calibration invalid: ${calibration.problems.join('; ')}`);

    for (const spec of CAMPAIGNS) {
      const teamId = teamIds.get(spec.team)!;
      const creator = spec.team === 'attoclock' ? analystId : phaseAnalystId;
      const [campaign] = await Campaign.findOrCreate({
        where: { team_id: teamId, name: spec.name },
        defaults: {
          team_id: teamId,
          name: spec.name,
          target: spec.target,
          wavelength_nm: spec.wavelengthNm,
          experiment_kind: spec.kind,
          description: spec.description,
          created_by: creator,
          current_calibration_id: null,
          current_settings_id: null,
          embargo_until: null,
        },
        transaction: t,
      });

      const settings = parseSettings(
        spec.kind === 'angular_streaking'
          ? { note: 'Demo settings v1: defaults of FORMATS §3.' }
          : { lobes: spec.kind === 'bicircular' ? 3 : 'auto', note: 'Demo settings v1 for two-colour scans.' },
      );
      if (!settings.ok) throw new Error(`demo settings invalid: ${settings.problems.join('; ')}`);

      const now = new Date();
      const [cal] = await DetectorCalibrationVersion.findOrCreate({
        where: { campaign_id: campaign.id, version: 1 },
        defaults: {
          campaign_id: campaign.id,
          version: 1,
          body: calibration.value,
          note: 'Initial demo calibration.',
          status: 'approved',
          created_by: creator,
          approved_by: piId,
          approved_at: now,
          locked_at: null,
        },
        transaction: t,
      });
      const [set] = await AnalysisSettingsVersion.findOrCreate({
        where: { campaign_id: campaign.id, version: 1 },
        defaults: {
          campaign_id: campaign.id,
          version: 1,
          body: settings.value,
          note: 'Initial demo settings.',
          status: 'approved',
          created_by: creator,
          approved_by: piId,
          approved_at: now,
          locked_at: null,
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

      for (const s of spec.shifts) {
        const openedBy = spec.team === 'attoclock' ? operatorId : phaseAnalystId;
        const openedAt = new Date(Date.now() - s.daysAgo * 86_400_000 - 3 * 3_600_000);
        await Shift.findOrCreate({
          where: { campaign_id: campaign.id, title: s.title },
          defaults: {
            team_id: teamId,
            campaign_id: campaign.id,
            title: s.title,
            status: s.open ? 'open' : 'closed',
            opened_by: openedBy,
            opened_at: openedAt,
            closed_by: s.open ? null : openedBy,
            closed_at: s.open ? null : new Date(openedAt.getTime() + 8 * 3_600_000),
            receipt_sent_at: null,
          },
          transaction: t,
        });
      }
    }
  });
}

function printSignIns(): void {
  const width = Math.max(...DEMO_USERS.map((u) => u.email.length));
  console.log('\nDemo sign-ins (Harbor Point Ultrafast Lab):');
  console.log(`  ${'e-mail'.padEnd(width)}  ${'password'.padEnd(DEMO_PASSWORD.length)}  role`);
  for (const u of DEMO_USERS) {
    console.log(`  ${u.email.padEnd(width)}  ${DEMO_PASSWORD}  ${u.summary}`);
  }
  console.log('');
}

async function main(): Promise<number> {
  loadDotEnv();
  await seed();
  console.log(`Seeded ${TEAMS.length} teams, ${DEMO_USERS.length} users and ${CAMPAIGNS.length} campaigns.`);
  printSignIns();
  return 0;
}

// Run only as a script (importing this file for DEMO_USERS must not seed).
if (process.argv[1] && import.meta.url === pathToFileURL(path.resolve(process.argv[1])).href) {
  main()
    .then(async (code) => {
      await closeSequelize();
      process.exit(code);
    })
    .catch(async (err: unknown) => {
      if (err instanceof EnvError) console.error(err.message);
      else console.error(`Seeding failed: ${(err as Error)?.message ?? String(err)}`);
      await closeSequelize().catch(() => undefined);
      process.exit(1);
    });
}
