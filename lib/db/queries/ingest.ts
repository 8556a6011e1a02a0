import 'server-only';
// The data layer of the end-of-shift ingest (C2): shifts, their log, resumable uploads, raw files and scans.
// Functions take one object argument and return plain DTOs; driver errors become `*:database` AppErrors.
import { Op, type Transaction } from 'sequelize';
import { getDb } from '@/lib/db';
import { AppError } from '@/lib/errors';
import { catalogueLimits, clipChars, TARGET_MAX_CHARS, TITLE_MAX_CHARS } from '@/lib/ingest/catalogue-limits';
import { storedKeyFor } from '@/lib/ingest/plan';
import type {
  LogEntryDto,
  RawFileStatusDto,
  ShiftFileDto,
  ShiftHeaderDto,
  UnfinishedUploadDto,
  VerifyingUploadDto,
} from '@/lib/ingest/types';
import { Campaign, Membership, RawFile, Scan, Shift, ShiftLogEntry, Team, Upload, User } from '@/models';
import type { ScanMetadata } from '@/reduction/formats';

// HELPERS //

async function db<T>(what: string, fn: () => Promise<T>): Promise<T> {
  try {
    getDb();
    return await fn();
  } catch (err) {
    if (err instanceof AppError) throw err;
    const name = (err as Error)?.name ?? '';
    const unavailable = /Connection|Timeout|HostNotReachable|AccessDenied/.test(name);
    throw new AppError(unavailable ? 'unavailable:database' : 'internal:database', { cause: err, context: { what } });
  }
}

const iso = (d: Date | string | null | undefined): string | null => (d ? new Date(d).toISOString() : null);

async function userNames(ids: (number | null | undefined)[]): Promise<Map<number, string>> {
  const want = [...new Set(ids.filter((x): x is number => typeof x === 'number'))];
  if (want.length === 0) return new Map();
  const rows = await User.findAll({ where: { id: want }, attributes: ['id', 'name', 'email'], raw: true });
  return new Map(rows.map((u) => [u.id, u.name || u.email]));
}

// SHIFTS //

export interface ShiftRecord {
  id: number;
  teamId: number;
  teamSlug: string;
  campaignId: number;
  status: 'open' | 'closed';
  header: ShiftHeaderDto;
}

/** The shift with its campaign and team, or null. No access check: callers authorize with the returned teamId. */
export async function getShiftRecord({ shiftId }: { shiftId: number }): Promise<ShiftRecord | null> {
  return db('getShiftRecord', async () => {
    const shift = await Shift.findByPk(shiftId, { include: [{ model: Campaign, as: 'campaign' }] });
    if (!shift) return null;
    const campaign = (shift as Shift & { campaign?: Campaign }).campaign;
    const team = await Team.findByPk(shift.team_id, { raw: true });
    if (!campaign || !team) return null;
    const names = await userNames([shift.opened_by, shift.closed_by]);
    return {
      id: shift.id,
      teamId: shift.team_id,
      teamSlug: team.slug,
      campaignId: shift.campaign_id,
      status: shift.status,
      header: {
        id: shift.id,
        title: shift.title,
        status: shift.status,
        openedAt: iso(shift.opened_at) ?? '',
        openedBy: shift.opened_by ? (names.get(shift.opened_by) ?? null) : null,
        closedAt: iso(shift.closed_at),
        closedBy: shift.closed_by ? (names.get(shift.closed_by) ?? null) : null,
        receiptSentAt: iso(shift.receipt_sent_at),
        team: { id: team.id, slug: team.slug, name: team.name },
        campaign: {
          id: campaign.id,
          name: campaign.name,
          target: campaign.target,
          wavelengthNm: campaign.wavelength_nm,
          experimentKind: campaign.experiment_kind,
        },
      },
    };
  });
}

/** Marks the shift closed (only if it is open); returns false when it was already closed. */
export async function closeShiftRow({ shiftId, userId }: { shiftId: number; userId: number }): Promise<boolean> {
  return db('closeShiftRow', async () => {
    const [n] = await Shift.update(
      { status: 'closed', closed_by: userId, closed_at: new Date() },
      { where: { id: shiftId, status: 'open' } },
    );
    return n === 1;
  });
}

export async function markReceiptSent({ shiftId }: { shiftId: number }): Promise<void> {
  await db('markReceiptSent', () => Shift.update({ receipt_sent_at: new Date() }, { where: { id: shiftId } }));
}

/** E-mail addresses of the team's analysts (active users). */
export async function listTeamAnalystEmails({ teamId }: { teamId: number }): Promise<string[]> {
  return db('listTeamAnalystEmails', async () => {
    const rows = await Membership.findAll({
      where: { team_id: teamId, role: 'analyst' },
      include: [{ model: User, as: 'user', where: { is_active: true }, attributes: ['email'] }],
    });
    return rows.map((m) => (m as Membership & { user?: User }).user?.email).filter((e): e is string => !!e);
  });
}

// LOG //

function toLogDto(e: ShiftLogEntry, names: Map<number, string>): LogEntryDto {
  return {
    id: e.id,
    notedAt: iso(e.noted_at) ?? '',
    author: e.author_id ? (names.get(e.author_id) ?? null) : null,
    text: e.text,
    target: e.target,
    wavelengthNm: e.wavelength_nm,
    pulseEnergyUj: e.pulse_energy_uj,
    ellipticity: e.ellipticity,
    detectorVoltages: (e.detector_voltages as LogEntryDto['detectorVoltages']) ?? null,
  };
}

export async function listShiftLog({ shiftId }: { shiftId: number }): Promise<LogEntryDto[]> {
  return db('listShiftLog', async () => {
    const rows = await ShiftLogEntry.findAll({
      where: { shift_id: shiftId },
      order: [
        ['noted_at', 'ASC'],
        ['id', 'ASC'],
      ],
    });
    const names = await userNames(rows.map((r) => r.author_id));
    return rows.map((r) => toLogDto(r, names));
  });
}

export async function insertLogEntry(input: {
  shiftId: number;
  authorId: number;
  notedAt: Date;
  text: string;
  target: string | null;
  wavelengthNm: number | null;
  pulseEnergyUj: number | null;
  ellipticity: number | null;
  detectorVoltages: Record<string, number> | null;
  transaction?: Transaction;
}): Promise<LogEntryDto> {
  return db('insertLogEntry', async () => {
    const row = await ShiftLogEntry.create(
      {
        shift_id: input.shiftId,
        author_id: input.authorId,
        noted_at: input.notedAt,
        text: input.text,
        target: input.target,
        wavelength_nm: input.wavelengthNm,
        pulse_energy_uj: input.pulseEnergyUj,
        ellipticity: input.ellipticity,
        detector_voltages: input.detectorVoltages,
      },
      { transaction: input.transaction },
    );
    return toLogDto(row, await userNames([input.authorId]));
  });
}

// UPLOADS //

export interface UploadRecord {
  id: number;
  teamId: number;
  shiftId: number;
  userId: number;
  bucket: string;
  objectKey: string;
  fileName: string;
  sizeBytes: number;
  lastModifiedMs: number | null;
  clientSha256: string | null;
  precheck: unknown;
  multipartUploadId: string | null;
  partSize: number | null;
  partCount: number | null;
  status: 'open' | 'verifying' | 'completed' | 'aborted' | 'failed';
  rawFileId: number | null;
  error: string | null;
  createdAt: string;
}

function toUploadRecord(u: Upload): UploadRecord {
  return {
    id: u.id,
    teamId: u.team_id,
    shiftId: u.shift_id,
    userId: u.user_id,
    bucket: u.bucket,
    objectKey: u.object_key,
    fileName: u.file_name,
    sizeBytes: Number(u.size_bytes),
    lastModifiedMs: u.last_modified_ms === null ? null : Number(u.last_modified_ms),
    clientSha256: u.client_sha256,
    precheck: u.precheck,
    multipartUploadId: u.multipart_upload_id,
    partSize: u.part_size,
    partCount: u.part_count,
    status: u.status,
    rawFileId: u.raw_file_id,
    error: u.error,
    createdAt: iso(u.created_at) ?? '',
  };
}

export async function getUploadRecord({ uploadId }: { uploadId: number }): Promise<UploadRecord | null> {
  return db('getUploadRecord', async () => {
    const u = await Upload.findByPk(uploadId);
    return u ? toUploadRecord(u) : null;
  });
}

/** An unfinished upload of the same file (name + size + lastModified) by the same user in the same shift. */
export async function findResumableUpload(input: {
  userId: number;
  shiftId: number;
  fileName: string;
  sizeBytes: number;
  lastModifiedMs: number;
}): Promise<UploadRecord | null> {
  return db('findResumableUpload', async () => {
    const u = await Upload.findOne({
      where: {
        user_id: input.userId,
        shift_id: input.shiftId,
        file_name: input.fileName,
        size_bytes: input.sizeBytes,
        last_modified_ms: input.lastModifiedMs,
        status: 'open',
      },
      order: [['id', 'DESC']],
    });
    return u ? toUploadRecord(u) : null;
  });
}

export async function insertUpload(input: {
  teamId: number;
  shiftId: number;
  userId: number;
  bucket: string;
  objectKey: string;
  fileName: string;
  sizeBytes: number;
  lastModifiedMs: number;
  precheck: unknown;
  multipartUploadId: string | null;
  partSize: number | null;
  partCount: number | null;
  replacesRawFileId: number | null;
}): Promise<UploadRecord> {
  return db('insertUpload', async () => {
    const precheck =
      input.replacesRawFileId === null
        ? input.precheck
        : { ...((input.precheck as object | null) ?? {}), replacesRawFileId: input.replacesRawFileId };
    const u = await Upload.create({
      team_id: input.teamId,
      shift_id: input.shiftId,
      user_id: input.userId,
      bucket: input.bucket,
      object_key: input.objectKey,
      file_name: input.fileName,
      size_bytes: input.sizeBytes,
      last_modified_ms: input.lastModifiedMs,
      client_sha256: null,
      precheck: precheck ?? null,
      multipart_upload_id: input.multipartUploadId,
      part_size: input.partSize,
      part_count: input.partCount,
      status: 'open',
      raw_file_id: null,
      error: null,
    });
    return toUploadRecord(u);
  });
}

/**
 * Moves an upload from one status to another only if it is still in `from` (a compare-and-set, so two completes
 * racing for the same upload cannot both verify it). Returns whether the row changed.
 */
export async function transitionUpload(input: {
  uploadId: number;
  from: UploadRecord['status'][];
  to: UploadRecord['status'];
  error?: string | null;
  clientSha256?: string | null;
  transaction?: Transaction;
}): Promise<boolean> {
  return db('transitionUpload', async () => {
    const patch: Partial<Upload> = { status: input.to };
    if (input.error !== undefined) patch.error = input.error;
    if (input.clientSha256 !== undefined) patch.client_sha256 = input.clientSha256;
    const [n] = await Upload.update(patch, {
      where: { id: input.uploadId, status: { [Op.in]: input.from } },
      transaction: input.transaction,
    });
    return n === 1;
  });
}

export async function listUnfinishedUploads({ shiftId }: { shiftId: number }): Promise<UnfinishedUploadDto[]> {
  return db('listUnfinishedUploads', async () => {
    const rows = await Upload.findAll({ where: { shift_id: shiftId, status: 'open' }, order: [['id', 'ASC']] });
    const names = await userNames(rows.map((r) => r.user_id));
    return rows.map((u) => ({
      uploadId: u.id,
      fileName: u.file_name,
      sizeBytes: Number(u.size_bytes),
      lastModifiedMs: u.last_modified_ms === null ? null : Number(u.last_modified_ms),
      mode: u.multipart_upload_id ? 'multipart' : 'single',
      uploadedBy: names.get(u.user_id) ?? null,
      startedAt: iso(u.created_at) ?? '',
    }));
  });
}

/** Uploads of the shift whose stored object a worker is verifying now (large files, after the completion answered). */
export async function listVerifyingUploads({ shiftId }: { shiftId: number }): Promise<VerifyingUploadDto[]> {
  return db('listVerifyingUploads', async () => {
    const rows = await Upload.findAll({ where: { shift_id: shiftId, status: 'verifying' }, order: [['id', 'ASC']] });
    return rows.map((u) => ({ uploadId: u.id, fileName: u.file_name, sizeBytes: Number(u.size_bytes) }));
  });
}

export async function listOpenUploadRecords({ shiftId }: { shiftId: number }): Promise<UploadRecord[]> {
  return db('listOpenUploadRecords', async () =>
    (await Upload.findAll({ where: { shift_id: shiftId, status: { [Op.in]: ['open', 'verifying'] } } })).map(
      toUploadRecord,
    ),
  );
}

// RAW FILES AND SCANS //

export interface RawFileRecord {
  id: number;
  teamId: number;
  sha256: string;
  bucket: string;
  storageKey: string;
  sizeBytes: number;
  originalName: string;
  status: RawFileStatusDto;
  quarantineReasons: string[];
  metadata: ScanMetadata | null;
}

function toRawFileRecord(r: RawFile): RawFileRecord {
  return {
    id: r.id,
    teamId: r.team_id,
    sha256: r.sha256,
    bucket: r.bucket,
    storageKey: r.storage_key,
    sizeBytes: Number(r.size_bytes),
    originalName: r.original_name,
    status: r.status,
    quarantineReasons: r.quarantine_reasons ?? [],
    metadata: r.metadata,
  };
}

export async function findRawFileBySha256({ sha256 }: { sha256: string }): Promise<RawFileRecord | null> {
  return db('findRawFileBySha256', async () => {
    const r = await RawFile.findOne({ where: { sha256 } });
    return r ? toRawFileRecord(r) : null;
  });
}

/** The first scan of a raw file in a campaign (the one a linked duplicate is counted as), or null. */
export async function firstScanOfFileInCampaign({
  rawFileId,
  campaignId,
}: {
  rawFileId: number;
  campaignId: number;
}): Promise<number | null> {
  return db('firstScanOfFileInCampaign', async () => {
    const s = await Scan.findOne({
      where: { raw_file_id: rawFileId, campaign_id: campaignId },
      order: [['id', 'ASC']],
      attributes: ['id'],
    });
    return s?.id ?? null;
  });
}

export async function getRawFileRecord({ rawFileId }: { rawFileId: number }): Promise<RawFileRecord | null> {
  return db('getRawFileRecord', async () => {
    const r = await RawFile.findByPk(rawFileId);
    return r ? toRawFileRecord(r) : null;
  });
}

/** Scan columns that come from the file's metadata. */
export function scanColumnsFrom(meta: ScanMetadata | null) {
  return {
    experiment_kind: meta?.experimentKind ?? null,
    // the columns hold a bounded prefix; the metadata JSON keeps the whole value (lib/ingest/catalogue-limits.ts)
    title: meta?.title == null ? null : clipChars(meta.title, TITLE_MAX_CHARS),
    target: meta?.target == null ? null : clipChars(meta.target, TARGET_MAX_CHARS),
    wavelength_nm: meta?.wavelengthNm ?? null,
    ellipticity: meta?.ellipticity ?? null,
    helicity: meta?.helicity ?? null,
    step_quantity: meta?.step.quantity ?? null,
    n_steps: meta?.shape.nStep ?? null,
    // an event file (FORMATS §1.1) has no detector image: no pixel size
    n_y: meta?.events ? null : (meta?.shape.nY ?? null),
    n_x: meta?.events ? null : (meta?.shape.nX ?? null),
    started_at: meta && !Number.isNaN(Date.parse(meta.startTime)) ? new Date(meta.startTime) : null,
  };
}

/** Share of the optional descriptive fields present (FORMATS §1), 0…1, for the steward's completeness column. */
export function metadataCompleteness(meta: ScanMetadata | null): number | null {
  if (!meta) return null;
  const fields = [
    meta.title,
    meta.ellipticity,
    meta.helicity,
    meta.pulseDurationFs,
    meta.detectorDescription,
    meta.nominalMomentumPerPixelAu,
    meta.xAxis,
    meta.yAxis,
  ];
  return fields.filter((f) => f !== null && f !== undefined).length / fields.length;
}

export async function insertRawFileAndScan(input: {
  upload: UploadRecord;
  campaignId: number;
  sha256: string;
  status: 'accepted' | 'quarantined';
  reasons: string[];
  metadata: ScanMetadata | null;
  transaction: Transaction;
}): Promise<{ rawFileId: number; scanId: number }> {
  const { upload, transaction } = input;
  const raw = await RawFile.create(
    {
      team_id: upload.teamId,
      sha256: input.sha256,
      bucket: upload.bucket,
      storage_key: upload.objectKey,
      size_bytes: upload.sizeBytes,
      original_name: upload.fileName,
      status: input.status,
      quarantine_reasons: input.status === 'quarantined' ? input.reasons : null,
      metadata: input.metadata,
      metadata_completeness: metadataCompleteness(input.metadata),
      uploaded_by: upload.userId,
      verified_at: new Date(),
      released_by: null,
      released_at: null,
      replaced_by_id: null,
      archived_at: null,
      archive_key: null,
      embargo_until: null,
      retention_until: null,
      last_fixity_at: new Date(),
      last_fixity_ok: true,
      deleted_at: null,
    },
    { transaction },
  );
  const scan = await insertScan({
    upload,
    campaignId: input.campaignId,
    rawFileId: raw.id,
    metadata: input.metadata,
    status: input.status === 'accepted' ? 'uploaded' : 'quarantined',
    statusMessage: input.status === 'quarantined' ? (input.reasons[0] ?? 'quarantined') : null,
    transaction,
  });
  return { rawFileId: raw.id, scanId: scan };
}

export async function insertScan(input: {
  upload: UploadRecord;
  campaignId: number;
  rawFileId: number;
  metadata: ScanMetadata | null;
  status: 'uploaded' | 'quarantined';
  statusMessage: string | null;
  transaction: Transaction;
}): Promise<number> {
  const scan = await Scan.create(
    {
      team_id: input.upload.teamId,
      campaign_id: input.campaignId,
      shift_id: input.upload.shiftId,
      raw_file_id: input.rawFileId,
      ...scanColumnsFrom(input.metadata),
      status: input.status,
      status_message: input.statusMessage,
      latest_result_id: null,
      offset_deg: null,
      offset_err_deg: null,
      flag_note: null,
      created_by: input.upload.userId,
    },
    { transaction: input.transaction },
  );
  return scan.id;
}

export async function setUploadOutcome(input: {
  uploadId: number;
  rawFileId: number;
  scanId: number;
  clientSha256: string | null;
  transaction: Transaction;
}): Promise<void> {
  await Upload.update(
    {
      raw_file_id: input.rawFileId,
      scan_id: input.scanId,
      status: 'completed',
      error: null,
      client_sha256: input.clientSha256,
    },
    { where: { id: input.uploadId }, transaction: input.transaction },
  );
}

/** Sets a quarantined raw file (and its scans) released, with corrected metadata when given. */
export async function releaseRawFileRows(input: {
  rawFileId: number;
  userId: number;
  metadata: ScanMetadata | null;
  override: Record<string, unknown> | null;
  note: string;
  transaction: Transaction;
}): Promise<number[]> {
  const { transaction } = input;
  const patch: Partial<RawFile> = {
    status: 'released',
    released_by: input.userId,
    released_at: new Date(),
    metadata_override: input.override,
    release_note: input.note,
  };
  if (input.metadata) {
    patch.metadata = input.metadata;
    patch.metadata_completeness = metadataCompleteness(input.metadata);
  }
  await RawFile.update(patch, { where: { id: input.rawFileId }, transaction });
  const scans = await Scan.findAll({ where: { raw_file_id: input.rawFileId }, transaction });
  for (const s of scans) {
    await s.update(
      { ...(input.metadata ? scanColumnsFrom(input.metadata) : {}), status: 'uploaded', status_message: null },
      { transaction },
    );
  }
  return scans.map((s) => s.id);
}

export async function markRawFileReplaced(input: {
  rawFileId: number;
  replacedById: number;
  transaction: Transaction;
}): Promise<void> {
  await RawFile.update(
    { status: 'replaced', replaced_by_id: input.replacedById },
    { where: { id: input.rawFileId, status: 'quarantined' }, transaction: input.transaction },
  );
  await Scan.update(
    { status_message: `Replaced by a new upload (raw file ${input.replacedById}).` },
    { where: { raw_file_id: input.rawFileId }, transaction: input.transaction },
  );
}

export async function listShiftFiles({ shiftId }: { shiftId: number }): Promise<ShiftFileDto[]> {
  return db('listShiftFiles', async () => {
    const scans = await Scan.findAll({
      where: { shift_id: shiftId },
      include: [{ model: RawFile, as: 'rawFile' }],
      order: [['id', 'ASC']],
    });
    const uploads = await Upload.findAll({ where: { shift_id: shiftId, status: 'completed' }, raw: true });
    const uploadByScan = new Map<number, Upload>();
    for (const u of uploads) if (u.scan_id) uploadByScan.set(u.scan_id, u);
    const replacedFrom = new Map<number, number>();
    const rawIds = scans.map((s) => s.raw_file_id);
    if (rawIds.length) {
      const predecessors = await RawFile.findAll({
        where: { replaced_by_id: rawIds },
        attributes: ['id', 'replaced_by_id'],
        raw: true,
      });
      for (const p of predecessors) if (p.replaced_by_id) replacedFrom.set(p.replaced_by_id, p.id);
    }
    const names = await userNames(scans.map((s) => s.created_by));
    return scans.map((s) => {
      const raw = (s as Scan & { rawFile?: RawFile }).rawFile;
      const upload = uploadByScan.get(s.id);
      // A duplicate upload's own object was deleted; its scan points at the raw file stored earlier.
      const duplicateLinked =
        !!upload &&
        !!raw &&
        upload.object_key !== raw.storage_key &&
        storedKeyFor(upload.object_key) !== raw.storage_key;
      return {
        scanId: s.id,
        rawFileId: s.raw_file_id,
        fileName: upload?.file_name ?? raw?.original_name ?? '',
        sizeBytes: Number(raw?.size_bytes ?? 0),
        sha256: raw?.sha256 ?? '',
        rawStatus: (raw?.status ?? 'accepted') as RawFileStatusDto,
        scanStatus: s.status,
        reasons: raw?.quarantine_reasons ?? [],
        warnings: catalogueLimits((raw?.metadata as ScanMetadata | null) ?? null).warnings,
        duplicateLinked,
        uploadedAt: iso(s.created_at) ?? '',
        uploadedBy: s.created_by ? (names.get(s.created_by) ?? null) : null,
        releasedAt: iso(raw?.released_at),
        releaseNote: raw?.release_note ?? null,
        replacedByRawFileId: raw?.replaced_by_id ?? null,
        replacesRawFileId: replacedFrom.get(s.raw_file_id) ?? null,
        summary: {
          experimentKind: s.experiment_kind,
          target: s.target,
          wavelengthNm: s.wavelength_nm,
          nSteps: s.n_steps,
          nY: s.n_y,
          nX: s.n_x,
        },
      };
    });
  });
}

/** Teams of a raw file's scans (a duplicate may be linked from several shifts). */
export async function getScanRecord({ scanId }: { scanId: number }) {
  return db('getScanRecord', async () => {
    const s = await Scan.findByPk(scanId, { raw: true });
    return s ? { id: s.id, teamId: s.team_id, rawFileId: s.raw_file_id, status: s.status } : null;
  });
}

export async function setScanStatus(input: { scanId: number; status: 'uploaded' | 'queued'; message?: string | null }) {
  await db('setScanStatus', () =>
    Scan.update({ status: input.status, status_message: input.message ?? null }, { where: { id: input.scanId } }),
  );
}

export const ABANDONED_AT_CLOSE = 'Abandoned when the shift was closed.';

/** Uploads abandoned at closing (for the receipt). */
export async function listAbandonedUploads({ shiftId }: { shiftId: number }) {
  return db('listAbandonedUploads', async () =>
    (
      await Upload.findAll({
        where: { shift_id: shiftId, status: 'aborted', error: ABANDONED_AT_CLOSE },
        order: [['id', 'ASC']],
        raw: true,
      })
    ).map((u) => ({ fileName: u.file_name, sizeBytes: Number(u.size_bytes) })),
  );
}
