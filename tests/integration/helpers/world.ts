// Test data for the access tests: two teams (A and B) with their own campaigns and open shifts, one user per role
// (team roles in team A, facility roles without membership), and a member of team B who owns B's objects.
// Every name carries a random run id so runs never collide with each other or with the demo seed.
//
// `makeWorld({ data: true })` also gives each team what the data routes need (`World.a` / `World.b`): an approved
// calibration and settings pair, draft versions, a scan reduced in this process with its stored result (the
// forward model of reduction/synth, reduced by lib/jobs/reduce-scan.ts as the worker would, the same pieces that
// tests/integration/worker.test.ts uses), a closed shift with its receipt sent, and `fresh*` makers for rows that
// change what they touch (one new object per call).
import { createHash, randomBytes, randomUUID } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import bcrypt from 'bcryptjs';
import { getDb } from '@/lib/db';
import { insertUpload, type UploadRecord } from '@/lib/db/queries/ingest';
import { processReduction } from '@/lib/jobs/reduce-scan';
import type { FacilityRole, TeamRole } from '@/lib/policy';
import { getReductionQueue } from '@/lib/queue/reduction-queue';
import { buckets, createMultipart, putObject } from '@/lib/storage/s3';
import {
  AnalysisSettingsVersion,
  Campaign,
  DetectorCalibrationVersion,
  FacilityRoleGrant,
  Invitation,
  Membership,
  RawFile,
  ReductionJob,
  Scan,
  Shift,
  Team,
  User,
} from '@/models';
import type { DetectorCalibration } from '@/reduction/formats';
import { loadH5wasmNode, openScanPath } from '@/reduction/hdf5/node';
import { planScan, type SynthOptions } from '@/reduction/synth/model';
import { writeSynthScan } from '@/reduction/synth/scan-file';
import { rawFileRow } from './rows';

export const TEST_PASSWORD = 'correct horse battery staple';

/** Small, fast scans: the default forward model on a 128-pixel detector, 2 steps (as in worker.test.ts, smaller). */
export const SYNTH_BASE: Partial<SynthOptions> = {
  kind: 'angular_streaking',
  size: 128,
  steps: 2,
  counts: 1e5,
  offsetDeg: 6,
  seed: 21,
};
/** Analysis settings that keep the reduction quick (few bootstrap resamples, a coarse momentum grid). */
export const QUICK_SETTINGS = { bootstrap: { resamples: 20, seed: 7 }, grid: { p_max_au: 2.0, n: 101 } };

/** What the data routes need in one team. */
export interface TeamData {
  teamId: number;
  teamSlug: string;
  campaignId: number;
  /** The open shift of the team (uploads and log entries go here). */
  shiftId: number;
  /** A closed shift whose receipt was sent. */
  closedShiftId: number;
  /** The campaign's current (approved) versions. */
  calibrationId: number;
  settingsId: number;
  /** Drafts nobody approved or used (GET and approve-refusal rows; mutating rows use fresh ones). */
  draftCalibrationId: number;
  draftSettingsId: number;
  /** A scan reduced in this process, with a result row and its result file in the derived bucket. */
  scanId: number;
  resultId: number;
  /** The member who owns the team's uploads when the caller is not the one who started them. */
  ownerId: number;
}

export interface World {
  run: string;
  teamA: number;
  teamB: number;
  users: { operator: number; analyst: number; pi: number; steward: number; admin: number; memberB: number };
  emails: Record<keyof World['users'], string>;
  campaignA: number;
  campaignB: number;
  shiftA: number;
  shiftB: number;
  /** Only with `makeWorld({ data: true })`. */
  a: TeamData;
  b: TeamData;
  /** A fresh active user, optionally in a team or with a facility role (for admin mutations). */
  freshUser(opts?: { teamId?: number; role?: TeamRole; facility?: FacilityRole }): Promise<number>;
  freshInvitation(teamId: number): Promise<number>;
  /** A new draft version of the team's campaign. */
  freshDraft(t: TeamData, kind: 'calibration' | 'settings'): Promise<number>;
  /** A new open shift on the team's campaign. */
  freshShift(t: TeamData): Promise<number>;
  /** A new scan (not reduced, file not in storage) of the team's campaign, ready to be queued. */
  freshScan(t: TeamData): Promise<number>;
  /** A new campaign with an approved pair and one reducible scan (for the batch row). */
  freshReducibleCampaign(t: TeamData): Promise<number>;
  /** A new quarantined raw file with its quarantined scan. */
  freshQuarantinedFile(t: TeamData): Promise<number>;
  /**
   * A new open upload in the team's open shift, started by `userId`: `single` with the object already in storage
   * (the team's scan file again, ready to complete: it becomes a linked duplicate), or `multipart` (20 MiB declared, no parts sent yet).
   */
  freshUpload(t: TeamData, userId: number, mode: 'single' | 'multipart'): Promise<number>;
  /** Valid body of a calibration / settings version. */
  versionBody(kind: 'calibration' | 'settings'): unknown;
  unique(prefix: string): string;
  /** Removes the reduction jobs this world left in the queue and its scratch files. */
  cleanup(): Promise<void>;
}

let passwordHash: string | null = null;

export async function makeUser(input: {
  email: string;
  name?: string;
  teamId?: number;
  role?: TeamRole;
  facility?: FacilityRole;
  password?: string;
  isActive?: boolean;
}): Promise<number> {
  getDb();
  if (!passwordHash) passwordHash = await bcrypt.hash(TEST_PASSWORD, 4);
  const hash = input.password && input.password !== TEST_PASSWORD ? await bcrypt.hash(input.password, 4) : passwordHash;
  const user = await User.create({
    email: input.email,
    name: input.name ?? input.email.split('@')[0]!,
    password_hash: hash,
    is_active: input.isActive ?? true,
    notification_prefs: null,
    last_sign_in_at: null,
  });
  if (input.teamId && input.role)
    await Membership.create({ user_id: user.id, team_id: input.teamId, role: input.role });
  if (input.facility) await FacilityRoleGrant.create({ user_id: user.id, role: input.facility });
  return user.id;
}

function scanRow(
  t: { teamId: number; campaignId: number; shiftId: number },
  rawFileId: number,
  over: Partial<Scan> = {},
) {
  return {
    team_id: t.teamId,
    campaign_id: t.campaignId,
    shift_id: t.shiftId,
    raw_file_id: rawFileId,
    experiment_kind: 'angular_streaking' as const,
    title: `matrix scan ${rawFileId}`,
    target: 'Ar',
    wavelength_nm: 800,
    ellipticity: 0.9,
    helicity: 1,
    step_quantity: 'intensity',
    n_steps: 2,
    n_y: 128,
    n_x: 128,
    started_at: new Date(),
    status: 'uploaded' as const,
    status_message: null,
    flag_note: null,
    latest_result_id: null,
    offset_deg: null,
    offset_err_deg: null,
    created_by: null,
    ...over,
  };
}

export async function makeWorld(opts: { data?: boolean } = {}): Promise<World> {
  getDb();
  const run = randomBytes(4).toString('hex');
  let counter = 0;
  const unique = (prefix: string) => `${prefix}-${run}-${++counter}`;
  const teamARow = await Team.create({ slug: `ta-${run}`, name: `Team A ${run}`, description: null });
  const teamBRow = await Team.create({ slug: `tb-${run}`, name: `Team B ${run}`, description: null });
  const teamA = teamARow.id;
  const teamB = teamBRow.id;
  const emails = {
    operator: `operator-${run}@matrix.example`,
    analyst: `analyst-${run}@matrix.example`,
    pi: `pi-${run}@matrix.example`,
    steward: `steward-${run}@matrix.example`,
    admin: `admin-${run}@matrix.example`,
    memberB: `member-b-${run}@matrix.example`,
  };
  const users = {
    operator: await makeUser({ email: emails.operator, teamId: teamA, role: 'operator' }),
    analyst: await makeUser({ email: emails.analyst, teamId: teamA, role: 'analyst' }),
    pi: await makeUser({ email: emails.pi, teamId: teamA, role: 'pi' }),
    steward: await makeUser({ email: emails.steward, facility: 'steward' }),
    admin: await makeUser({ email: emails.admin, facility: 'admin' }),
    memberB: await makeUser({ email: emails.memberB, teamId: teamB, role: 'analyst' }),
  };
  const campaign = async (teamId: number, name: string) =>
    (
      await Campaign.create({
        team_id: teamId,
        name,
        target: 'Ar',
        wavelength_nm: 800,
        experiment_kind: 'angular_streaking',
        description: null,
        created_by: null,
        current_calibration_id: null,
        current_settings_id: null,
        embargo_until: null,
      })
    ).id;
  const campaignA = await campaign(teamA, `Campaign A ${run}`);
  const campaignB = await campaign(teamB, `Campaign B ${run}`);
  const shift = async (teamId: number, campaignId: number, openedBy: number, closed = false) =>
    (
      await Shift.create({
        team_id: teamId,
        campaign_id: campaignId,
        title: `Shift ${run}`,
        status: closed ? 'closed' : 'open',
        opened_by: openedBy,
        opened_at: new Date(),
        closed_by: closed ? openedBy : null,
        closed_at: closed ? new Date() : null,
        receipt_sent_at: closed ? new Date() : null,
      })
    ).id;
  const shiftA = await shift(teamA, campaignA, users.operator);
  const shiftB = await shift(teamB, campaignB, users.memberB);

  // Scan-file bytes and the calibration that matches them (the forward model knows its own detector).
  const work = mkdtempSync(path.join(tmpdir(), `lobeline-matrix-${run}-`));
  const plan = planScan(SYNTH_BASE);
  const calibration: DetectorCalibration = plan.calibration;
  const files = new Map<number, { bytes: Uint8Array; sha256: string; meta: RawFile['metadata'] }>();
  /** One synthetic scan file per team (different noise seeds, so different checksums). */
  const synthFile = async (teamId: number) => {
    const known = files.get(teamId);
    if (known) return known;
    const file = path.join(work, `matrix-scan-${teamId}.h5`);
    writeSynthScan(await loadH5wasmNode(), file, planScan({ ...SYNTH_BASE, seed: teamId }));
    const opened = await openScanPath(file);
    if (!opened.ok) throw new Error(`the synthetic scan file does not open: ${JSON.stringify(opened)}`);
    const meta = opened.scan.meta;
    opened.scan.close();
    const bytes = new Uint8Array(readFileSync(file));
    const made = { bytes, sha256: createHash('sha256').update(bytes).digest('hex'), meta };
    files.set(teamId, made);
    return made;
  };
  const versionBody = (kind: 'calibration' | 'settings') => (kind === 'calibration' ? calibration : QUICK_SETTINGS);
  const version = async (
    campaignId: number,
    kind: 'calibration' | 'settings',
    status: 'draft' | 'approved',
    createdBy: number | null,
  ) => {
    const Model = (
      kind === 'calibration' ? DetectorCalibrationVersion : AnalysisSettingsVersion
    ) as typeof DetectorCalibrationVersion;
    const max = ((await Model.max('version', { where: { campaign_id: campaignId } })) as number | null) ?? 0;
    return (
      await Model.create({
        campaign_id: campaignId,
        version: max + 1,
        body: versionBody(kind) as DetectorCalibrationVersion['body'],
        note: 'matrix',
        status,
        created_by: createdBy,
        approved_by: status === 'approved' ? createdBy : null,
        approved_at: status === 'approved' ? new Date() : null,
        locked_at: null,
      })
    ).id;
  };
  const approvedPair = async (campaignId: number, by: number | null) => {
    const calibrationId = await version(campaignId, 'calibration', 'approved', by);
    const settingsId = await version(campaignId, 'settings', 'approved', by);
    await Campaign.update(
      { current_calibration_id: calibrationId, current_settings_id: settingsId },
      { where: { id: campaignId } },
    );
    return { calibrationId, settingsId };
  };
  const createdScans: number[] = [];

  const teamData = async (teamId: number, teamSlug: string, campaignId: number, shiftId: number, ownerId: number) => {
    const { calibrationId, settingsId } = await approvedPair(campaignId, ownerId);
    const { bytes, sha256, meta } = await synthFile(teamId);
    const key = `raw/${teamSlug}/${shiftId}/${randomUUID()}.h5`;
    await putObject({ bucket: buckets().raw, key, body: bytes, contentLength: bytes.length });
    const raw = await RawFile.create(
      rawFileRow(teamId, { sha256, storage_key: key, size_bytes: bytes.length, metadata: meta }),
    );
    const scan = await Scan.create(scanRow({ teamId, campaignId, shiftId }, raw.id));
    const job = await ReductionJob.create({
      scan_id: scan.id,
      calibration_id: calibrationId,
      settings_id: settingsId,
      batch_id: null,
      requested_by: ownerId,
      queue_job_id: null,
      error_message: null,
      started_at: null,
      finished_at: null,
    });
    await processReduction(
      { scanId: scan.id, calibrationId, settingsId, reductionJobId: job.id },
      { attemptsMade: 0, maxAttempts: 1, updateProgress: async () => undefined },
    );
    const reduced = await Scan.findByPk(scan.id);
    if (!reduced?.latest_result_id) {
      const j = await ReductionJob.findByPk(job.id);
      throw new Error(`the world's scan was not reduced: ${j?.status} ${j?.error_message}`);
    }
    return {
      teamId,
      teamSlug,
      campaignId,
      shiftId,
      closedShiftId: await shift(teamId, campaignId, ownerId, true),
      calibrationId,
      settingsId,
      draftCalibrationId: await version(campaignId, 'calibration', 'draft', ownerId),
      draftSettingsId: await version(campaignId, 'settings', 'draft', ownerId),
      scanId: scan.id,
      resultId: reduced.latest_result_id,
      ownerId,
    } satisfies TeamData;
  };
  const noData = new Proxy({} as TeamData, {
    get: () => {
      throw new Error('makeWorld({ data: true }) builds the per-team data');
    },
  });
  const a = opts.data ? await teamData(teamA, teamARow.slug, campaignA, shiftA, users.operator) : noData;
  const b = opts.data ? await teamData(teamB, teamBRow.slug, campaignB, shiftB, users.memberB) : noData;

  const freshScan = async (t: { teamId: number; campaignId: number; shiftId: number }) => {
    const raw = await RawFile.create(rawFileRow(t.teamId));
    const id = (await Scan.create(scanRow(t, raw.id))).id;
    createdScans.push(id);
    return id;
  };

  return {
    run,
    teamA,
    teamB,
    users,
    emails,
    campaignA,
    campaignB,
    shiftA,
    shiftB,
    a,
    b,
    unique,
    versionBody,
    freshUser: (o = {}) => makeUser({ email: `${unique('fresh')}@matrix.example`, ...o }),
    freshInvitation: async (teamId) =>
      (
        await Invitation.create({
          email: `${unique('invitee')}@matrix.example`,
          name: null,
          team_id: teamId,
          role: 'operator',
          facility_role: null,
          token_hash: randomBytes(32).toString('hex'),
          invited_by: null,
          expires_at: new Date(Date.now() + 86_400_000),
          accepted_at: null,
          revoked_at: null,
        })
      ).id,
    freshDraft: (t, kind) => version(t.campaignId, kind, 'draft', t.ownerId),
    freshShift: (t) => shift(t.teamId, t.campaignId, t.ownerId),
    freshScan,
    freshReducibleCampaign: async (t) => {
      const campaignId = await campaign(t.teamId, unique('Batch campaign'));
      await approvedPair(campaignId, t.ownerId);
      const shiftId = await shift(t.teamId, campaignId, t.ownerId);
      await freshScan({ teamId: t.teamId, campaignId, shiftId });
      return campaignId;
    },
    freshQuarantinedFile: async (t) => {
      const reasons = ['/entry/sample/name: missing (the target gas is required).'];
      const raw = await RawFile.create(rawFileRow(t.teamId, { status: 'quarantined', quarantine_reasons: reasons }));
      const scan = await Scan.create(scanRow(t, raw.id, { status: 'quarantined', status_message: reasons[0]! }));
      createdScans.push(scan.id);
      return raw.id;
    },
    freshUpload: async (t, userId, mode) => {
      const bucket = buckets().raw;
      const objectKey = `raw/${t.teamSlug}/${t.shiftId}/${randomUUID()}.h5`;
      let upload: UploadRecord;
      const common = {
        teamId: t.teamId,
        shiftId: t.shiftId,
        userId,
        bucket,
        objectKey,
        fileName: `${unique('matrix')}.h5`,
        lastModifiedMs: 1_700_000_000_000,
        precheck: null,
        replacesRawFileId: null,
      };
      if (mode === 'single') {
        // The team's scan file again: completing it links the upload to the stored original (a duplicate).
        const { bytes } = await synthFile(t.teamId);
        await putObject({ bucket, key: objectKey, body: bytes, contentLength: bytes.length });
        upload = await insertUpload({
          ...common,
          sizeBytes: bytes.length,
          multipartUploadId: null,
          partSize: null,
          partCount: null,
        });
      } else {
        const MiB = 1024 * 1024;
        const { uploadId } = await createMultipart({ bucket, key: objectKey, contentType: 'application/x-hdf5' });
        upload = await insertUpload({
          ...common,
          sizeBytes: 20 * MiB,
          multipartUploadId: uploadId,
          partSize: 8 * MiB,
          partCount: 3,
        });
      }
      return upload.id;
    },
    cleanup: async () => {
      rmSync(work, { recursive: true, force: true });
      // Jobs queued by the rows (fresh scans whose files are not in storage) must not reach a later worker.
      const all = new Set<number>(createdScans);
      const campaigns = [campaignA, campaignB];
      for (const s of await Scan.findAll({ where: { campaign_id: campaigns }, attributes: ['id'] })) all.add(s.id);
      const queue = getReductionQueue();
      for (const job of await queue.getJobs(['waiting', 'delayed', 'prioritized'])) {
        if (job && all.has(job.data.scanId)) await job.remove().catch(() => undefined);
      }
      // …nor be put back on the queue by a later worker's lost-job sweep (lib/jobs/sweep.ts).
      if (all.size) {
        await ReductionJob.update(
          { status: 'failed', error_message: 'Closed by the test clean-up.' },
          { where: { scan_id: [...all], status: ['queued', 'running'] } },
        );
      }
    },
  };
}
