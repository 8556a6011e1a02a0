/**
 * The end-of-shift ingest (C2) as server operations: start or resume an upload, hand out presigned URLs, verify and
 * catalogue a completed object, cancel, close a shift with its receipt, keep the shift log, release quarantined
 * files. Every operation takes the actor and checks access through lib/policy.ts first. Node only.
 */
import { randomUUID } from 'node:crypto';
import { UniqueConstraintError } from 'sequelize';
import { recordAudit } from '@/lib/audit';
import { getDb } from '@/lib/db';
import { getActorByUserId } from '@/lib/db/queries/accounts';
import {
  ABANDONED_AT_CLOSE,
  closeShiftRow,
  findRawFileBySha256,
  findResumableUpload,
  firstScanOfFileInCampaign,
  getRawFileRecord,
  getShiftRecord,
  getUploadRecord,
  insertLogEntry,
  insertRawFileAndScan,
  insertScan,
  insertUpload,
  listAbandonedUploads,
  listOpenUploadRecords,
  listShiftFiles,
  listShiftLog,
  listTeamAnalystEmails,
  listUnfinishedUploads,
  listVerifyingUploads,
  markRawFileReplaced,
  markReceiptSent,
  releaseRawFileRows,
  type ShiftRecord,
  setUploadOutcome,
  transitionUpload,
  type UploadRecord,
} from '@/lib/db/queries/ingest';
import { getEnv } from '@/lib/env';
import { AppError } from '@/lib/errors';
import { log } from '@/lib/log';
import { recipientsWanting } from '@/lib/mail/preferences';
import { sendMail } from '@/lib/mail/transport';
import { type Actor, authorize, authorizeObject, can } from '@/lib/policy';
import {
  abortMultipart,
  buckets,
  completeMultipart,
  copyObjectAnySize,
  createMultipart,
  deleteObject,
  headObject,
  listParts,
  presignPut,
  presignUploadPart,
} from '@/lib/storage/s3';
import { catalogueLimits } from './catalogue-limits';
import { onScanAccepted } from './on-scan-accepted';
import { INCOMING_PREFIX, PRESIGN_SECONDS, partRange, planUpload, storedKeyFor } from './plan';
import { buildReceipt, type Receipt, receiptHtml, receiptText } from './receipt';
import type { LogEntryBody, ReleaseBody, StartUploadBody } from './schemas';
import type {
  LogEntryDto,
  PartUrlDto,
  ShiftViewDto,
  UploadOutcomeDto,
  UploadPendingDto,
  UploadStateDto,
  UploadTicketDto,
} from './types';
import { downloadAndHash, scratchDir, validateScanPath } from './verify';

const ilog = log.child({ surface: 'upload' });

// ACCESS HELPERS //

async function loadShift(actor: Actor, shiftId: number): Promise<ShiftRecord> {
  const shift = await getShiftRecord({ shiftId });
  // Someone outside the team learns nothing about the shift, not even that it exists (the refusal is audited).
  if (!shift) throw new AppError('not_found:shift');
  if (!can(actor, 'shift.view', { teamId: shift.teamId })) {
    throw new AppError('not_found:shift', {
      context: { action: 'shift.view', teamId: shift.teamId, userId: actor.userId, hiddenRefusal: true },
    });
  }
  return shift;
}

function requireOpen(shift: ShiftRecord): void {
  if (shift.status !== 'open') {
    throw new AppError('conflict:shift', {
      message: 'This shift is closed; it takes no more uploads or log entries. Open a new shift to continue.',
    });
  }
}

/** The upload, if the actor may work on it: same team with upload rights, and the user who started it. */
async function loadOwnUpload(actor: Actor, uploadId: number): Promise<UploadRecord> {
  const upload = await getUploadRecord({ uploadId });
  if (!upload) throw new AppError('not_found:upload', { message: 'There is no such upload.' });
  authorizeObject(actor, 'upload.create', { teamId: upload.teamId, surface: 'upload' });
  if (upload.userId !== actor.userId) {
    throw new AppError('forbidden:upload', {
      message: 'This upload was started by someone else; only they can continue or cancel it.',
      context: { action: 'upload.create', teamId: upload.teamId, userId: actor.userId },
    });
  }
  return upload;
}

const expiresAt = () => new Date(Date.now() + PRESIGN_SECONDS * 1000).toISOString();

// VIEW //

export async function getShiftView(actor: Actor, shiftId: number): Promise<ShiftViewDto> {
  const shift = await loadShift(actor, shiftId);
  authorize(actor, 'shift.view', { teamId: shift.teamId, surface: 'shift' });
  const [files, unfinished, verifying, entries] = await Promise.all([
    listShiftFiles({ shiftId }),
    listUnfinishedUploads({ shiftId }),
    listVerifyingUploads({ shiftId }),
    listShiftLog({ shiftId }),
  ]);
  const teamId = shift.teamId;
  const open = shift.status === 'open';
  return {
    shift: shift.header,
    files,
    unfinished,
    verifying,
    log: entries,
    permissions: {
      upload: open && can(actor, 'upload.create', { teamId }),
      log: open && can(actor, 'shift.log', { teamId }),
      close: open && can(actor, 'shift.close', { teamId }),
      release: can(actor, 'quarantine.release', { teamId }),
    },
  };
}

// START / RESUME //

/**
 * Options of the server-side callers only (scripts; no route handler passes them). `intoClosedShift` lets a script
 * add files to a past, closed shift (scripts/demo-scans.ts fills the seeded past shifts with demo scans); every
 * other step (access check, server-chosen key, verification, cataloguing, queueing) is the same as for a browser.
 */
export interface ServerUploadOptions {
  intoClosedShift?: boolean;
}

export async function startUpload(
  actor: Actor,
  body: StartUploadBody,
  options: ServerUploadOptions = {},
): Promise<UploadTicketDto> {
  const shift = await loadShift(actor, body.shiftId);
  authorize(actor, 'upload.create', { teamId: shift.teamId, surface: 'upload' });
  if (!options.intoClosedShift) requireOpen(shift);

  let replaces: number | null = null;
  if (body.replacesRawFileId !== undefined) {
    const old = await getRawFileRecord({ rawFileId: body.replacesRawFileId });
    if (!old || old.teamId !== shift.teamId) {
      throw new AppError('bad_request:upload', { details: ['replacesRawFileId: there is no such file in this team.'] });
    }
    if (old.status !== 'quarantined') {
      throw new AppError('bad_request:upload', {
        details: ['replacesRawFileId: only a quarantined file can be replaced by a new upload.'],
      });
    }
    replaces = old.id;
  }

  const plan = planUpload(body.sizeBytes);
  const existing = await findResumableUpload({
    userId: actor.userId,
    shiftId: shift.id,
    fileName: body.fileName,
    sizeBytes: body.sizeBytes,
    lastModifiedMs: body.lastModifiedMs,
  });
  if (existing) return ticketFor(existing, true);

  const key = `${INCOMING_PREFIX}${shift.teamSlug}/${shift.id}/${randomUUID()}.h5`;
  const bucket = buckets().raw;
  let multipartUploadId: string | null = null;
  if (plan.mode === 'multipart') {
    multipartUploadId = (await createMultipart({ bucket, key, contentType: 'application/x-hdf5' })).uploadId;
  }
  const upload = await insertUpload({
    teamId: shift.teamId,
    shiftId: shift.id,
    userId: actor.userId,
    bucket,
    objectKey: key,
    fileName: body.fileName,
    sizeBytes: body.sizeBytes,
    lastModifiedMs: body.lastModifiedMs,
    precheck: body.precheck ?? null,
    multipartUploadId,
    partSize: plan.mode === 'multipart' ? plan.partSize : null,
    partCount: plan.mode === 'multipart' ? plan.partCount : null,
    replacesRawFileId: replaces,
  });
  return ticketFor(upload, false);
}

async function ticketFor(upload: UploadRecord, resumed: boolean): Promise<UploadTicketDto> {
  if (!upload.multipartUploadId || !upload.partSize || !upload.partCount) {
    const url = await presignPut({
      bucket: upload.bucket,
      key: upload.objectKey,
      contentLength: upload.sizeBytes,
      expiresIn: PRESIGN_SECONDS,
    });
    return { uploadId: upload.id, mode: 'single', sizeBytes: upload.sizeBytes, url, expiresAt: expiresAt(), resumed };
  }
  const done = resumed ? await goodParts(upload) : [];
  return {
    uploadId: upload.id,
    mode: 'multipart',
    sizeBytes: upload.sizeBytes,
    partSize: upload.partSize,
    partCount: upload.partCount,
    partsDone: done.map((p) => ({ partNumber: p.partNumber, size: p.size })),
    resumed,
  };
}

/** Parts in the store whose size is what the plan says (a part of the wrong size is sent again). */
async function goodParts(upload: UploadRecord) {
  const parts = await listParts({ bucket: upload.bucket, key: upload.objectKey, uploadId: upload.multipartUploadId! });
  return parts.filter((p) => {
    if (p.partNumber > upload.partCount!) return false;
    return p.size === partRange(upload.sizeBytes, upload.partSize!, p.partNumber).length;
  });
}

// PARTS //

export async function presignParts(actor: Actor, uploadId: number, partNumbers: number[]): Promise<PartUrlDto[]> {
  const upload = await loadOwnUpload(actor, uploadId);
  if (upload.status !== 'open') {
    throw new AppError('conflict:upload', { message: `This upload is ${upload.status}; it takes no more parts.` });
  }
  const shift = await loadShift(actor, upload.shiftId);
  requireOpen(shift);
  if (!upload.multipartUploadId || !upload.partSize || !upload.partCount) {
    throw new AppError('bad_request:upload', { details: ['This file goes in one piece; it has no parts.'] });
  }
  const wrong = partNumbers.filter((n) => n > upload.partCount!);
  if (wrong.length) {
    throw new AppError('bad_request:upload', {
      details: [`partNumbers: the file has ${upload.partCount} parts; ${wrong.join(', ')} do not exist.`],
    });
  }
  const at = expiresAt();
  return Promise.all(
    [...new Set(partNumbers)].map(async (partNumber) => {
      const size = partRange(upload.sizeBytes, upload.partSize!, partNumber).length;
      const url = await presignUploadPart({
        bucket: upload.bucket,
        key: upload.objectKey,
        uploadId: upload.multipartUploadId!,
        partNumber,
        contentLength: size,
        expiresIn: PRESIGN_SECONDS,
      });
      return { partNumber, url, size, expiresAt: at };
    }),
  );
}

export async function listUploadedParts(actor: Actor, uploadId: number) {
  const upload = await loadOwnUpload(actor, uploadId);
  if (!upload.multipartUploadId) return { parts: [] };
  if (upload.status !== 'open') return { parts: [] };
  return { parts: (await goodParts(upload)).map((p) => ({ partNumber: p.partNumber, size: p.size })) };
}

// ABORT //

export async function abortUpload(actor: Actor, uploadId: number, ip?: string): Promise<{ status: string }> {
  const upload = await loadOwnUpload(actor, uploadId);
  if (upload.status !== 'open') return { status: upload.status };
  await discardUpload(upload, 'Cancelled by the operator.');
  await recordAudit({
    action: 'file.uploaded',
    actorId: actor.userId,
    actorEmail: actor.email,
    teamId: upload.teamId,
    targetType: 'upload',
    targetId: upload.id,
    ip,
    outcome: 'failed',
    details: { cancelled: true, fileName: upload.fileName },
  });
  return { status: 'aborted' };
}

async function discardUpload(upload: UploadRecord, why: string): Promise<void> {
  if (!(await transitionUpload({ uploadId: upload.id, from: ['open'], to: 'aborted', error: why }))) return;
  try {
    if (upload.multipartUploadId) {
      await abortMultipart({ bucket: upload.bucket, key: upload.objectKey, uploadId: upload.multipartUploadId });
    } else {
      await deleteObject(upload.bucket, upload.objectKey);
    }
  } catch (err) {
    // The row already says aborted; leftover parts are only storage, never a catalogued file.
    ilog.warn('could not remove the parts of an aborted upload', { uploadId: upload.id, err });
  }
  if (!upload.multipartUploadId) await scheduleLeftovers(upload.id);
}

// COMPLETE AND VERIFY //

const MiB = 1024 * 1024;

/**
 * Objects up to this size are verified inside the completion request (well under a second of hashing and
 * reading); larger ones are verified by a worker (lib/jobs/verify-upload.ts), off the web server's request path,
 * and the completion answers at once with `verifying`.
 */
export const INLINE_VERIFY_MAX_BYTES = 8 * MiB;

function outcomeFrom(upload: UploadRecord, o: Omit<UploadOutcomeDto, 'uploadId' | 'state'>): UploadOutcomeDto {
  return { uploadId: upload.id, state: 'done', ...o };
}

/** Removes what an upload left in the store: its upload key and its verified copy (never a catalogued object). */
async function removeUploadObjects(upload: UploadRecord, keepKey?: string): Promise<void> {
  for (const key of [upload.objectKey, storedKeyFor(upload.objectKey)]) {
    if (key === keepKey) continue;
    await deleteObject(upload.bucket, key).catch((err) =>
      ilog.warn('could not remove an object of a finished upload', { uploadId: upload.id, key, err }),
    );
  }
}

async function failUpload(upload: UploadRecord, sentence: string): Promise<never> {
  await transitionUpload({ uploadId: upload.id, from: ['verifying'], to: 'failed', error: sentence });
  await removeUploadObjects(upload);
  await scheduleLeftovers(upload.id);
  throw new AppError('bad_request:upload', {
    message: 'The stored file does not match the file you sent.',
    details: [sentence],
  });
}

/**
 * Answer of the completion route: the verdict when the file was verified in the request, else `verifying` (the
 * worker's queue has it; GET /api/uploads/[id] tells when it is done).
 */
export async function finishUpload(
  actor: Actor,
  uploadId: number,
  clientSha256: string | undefined,
  ip?: string,
): Promise<UploadStateDto> {
  const now = await loadOwnUpload(actor, uploadId);
  if (now.status === 'verifying' && now.sizeBytes > INLINE_VERIFY_MAX_BYTES) {
    // A completion asked again (its first answer was lost): the same job id makes this a no-op if it is queued.
    const { enqueueUploadVerification } = await import('@/lib/jobs/verify-upload');
    await enqueueUploadVerification({ uploadId, ip: ip ?? null });
    return pendingState(uploadId, 'verifying');
  }
  const ready = await prepareCompletion(actor, uploadId, clientSha256, {});
  if ('done' in ready) return ready.done;
  if (ready.upload.sizeBytes <= INLINE_VERIFY_MAX_BYTES) {
    return verifyAndCatalogue(actor, ready.upload, ready.shift, clientSha256 ?? null, ip);
  }
  const { enqueueUploadVerification } = await import('@/lib/jobs/verify-upload');
  try {
    await enqueueUploadVerification({ uploadId, ip: ip ?? null });
  } catch (err) {
    // The queue is unreachable: the upload goes back to open, so completing again (the browser retries) queues it.
    await transitionUpload({ uploadId, from: ['verifying'], to: 'open' }).catch(() => undefined);
    throw err;
  }
  return pendingState(ready.upload.id, 'verifying');
}

function pendingState(uploadId: number, state: UploadPendingDto['state'], error?: string | null): UploadPendingDto {
  const message =
    state === 'verifying'
      ? 'Stored; the file store copy is being checked (size, SHA-256, every frame). This page updates when it is done.'
      : state === 'failed'
        ? `The upload was refused${error ? `: ${error}` : '.'}`
        : state === 'aborted'
          ? `The upload was cancelled${error ? `: ${error}` : '.'}`
          : (error ?? 'The upload is not finished yet.');
  return { uploadId, state, message };
}

/** Where an upload stands (the browser polls this while a large file is verified). */
export async function getUploadState(actor: Actor, uploadId: number): Promise<UploadStateDto> {
  const upload = await loadOwnUpload(actor, uploadId);
  if (upload.status === 'completed') return previousOutcome(upload);
  return pendingState(upload.id, upload.status, upload.error);
}

/**
 * Server-side completion that verifies in the caller (scripts): same checks, copy, hash, validation and
 * cataloguing as the route, whatever the size.
 */
export async function completeUpload(
  actor: Actor,
  uploadId: number,
  clientSha256: string | undefined,
  ip?: string,
  options: ServerUploadOptions = {},
): Promise<UploadOutcomeDto> {
  const ready = await prepareCompletion(actor, uploadId, clientSha256, options);
  if ('done' in ready) return ready.done;
  return verifyAndCatalogue(actor, ready.upload, ready.shift, clientSha256 ?? null, ip);
}

/**
 * The request-path part of a completion: access, state, assembling the parts, the size of the stored object.
 * Leaves the upload `verifying` with the browser's checksum recorded.
 */
async function prepareCompletion(
  actor: Actor,
  uploadId: number,
  clientSha256: string | undefined,
  options: ServerUploadOptions,
): Promise<{ done: UploadOutcomeDto } | { upload: UploadRecord; shift: ShiftRecord }> {
  const upload = await loadOwnUpload(actor, uploadId);
  if (upload.status === 'completed') return { done: await previousOutcome(upload) };
  if (upload.status !== 'open') {
    throw new AppError('conflict:upload', {
      message:
        upload.status === 'verifying'
          ? 'This file is being verified right now.'
          : `This upload is ${upload.status}${upload.error ? `: ${upload.error}` : ''}. Drop the file again to start over.`,
    });
  }
  const shift = await loadShift(actor, upload.shiftId);
  if (!options.intoClosedShift) requireOpen(shift);
  const to = { uploadId, from: ['open' as const], to: 'verifying' as const, clientSha256: clientSha256 ?? null };

  if (upload.multipartUploadId) {
    const parts = await goodParts(upload);
    const have = new Set(parts.map((p) => p.partNumber));
    const missing: number[] = [];
    for (let n = 1; n <= upload.partCount!; n++) if (!have.has(n)) missing.push(n);
    if (missing.length) {
      throw new AppError('conflict:upload', {
        message: `${missing.length} of ${upload.partCount} parts have not arrived yet.`,
        details: [`missing parts: ${missing.slice(0, 20).join(', ')}${missing.length > 20 ? ', …' : ''}`],
      });
    }
    if (!(await transitionUpload(to))) {
      throw new AppError('conflict:upload', { message: 'This file is being verified right now.' });
    }
    try {
      // After this the store refuses every part URL of the upload (the multipart upload no longer exists).
      await completeMultipart({
        bucket: upload.bucket,
        key: upload.objectKey,
        uploadId: upload.multipartUploadId,
        parts: parts.map((p) => ({ partNumber: p.partNumber, etag: p.etag })),
      });
    } catch (err) {
      await transitionUpload({ uploadId, from: ['verifying'], to: 'open' });
      throw err;
    }
  } else if (!(await transitionUpload(to))) {
    throw new AppError('conflict:upload', { message: 'This file is being verified right now.' });
  }

  let head: Awaited<ReturnType<typeof headObject>>;
  try {
    head = await headObject(upload.bucket, upload.objectKey);
  } catch (err) {
    if (err instanceof AppError && err.code === 'not_found:storage') {
      await transitionUpload({ uploadId, from: ['verifying'], to: 'open' });
      throw new AppError('conflict:upload', { message: 'The file has not arrived in storage yet; send it first.' });
    }
    await transitionUpload({ uploadId, from: ['verifying'], to: 'open' }).catch(() => undefined);
    throw err;
  }
  if (head.size !== upload.sizeBytes) {
    await failUpload(
      upload,
      `The stored object has ${head.size} bytes but the file has ${upload.sizeBytes}; it was not stored. Drop the file again.`,
    );
  }
  return { upload: { ...upload, status: 'verifying', clientSha256: clientSha256 ?? null }, shift };
}

/**
 * The worker's entry (lib/jobs/verify-upload.ts): verifies and catalogues an upload left `verifying` by the
 * completion route. Does nothing for an upload in any other state (a job run twice, or a stale job).
 *
 * @returns the verdict, or null when there was nothing to do
 */
export async function verifyQueuedUpload(uploadId: number, ip?: string | null): Promise<UploadOutcomeDto | null> {
  const upload = await getUploadRecord({ uploadId });
  if (upload?.status !== 'verifying') return null;
  const [actor, shift] = await Promise.all([
    getActorByUserId({ userId: upload.userId }),
    getShiftRecord({ shiftId: upload.shiftId }),
  ]);
  if (!actor || !shift) {
    await transitionUpload({
      uploadId,
      from: ['verifying'],
      to: 'failed',
      error: 'The user or the shift of this upload no longer exists.',
    });
    await removeUploadObjects(upload);
    return null;
  }
  return verifyAndCatalogue(actor, upload, shift, upload.clientSha256, ip ?? undefined, false);
}

/**
 * Removes the upload key of a finished upload (completed, failed or aborted) unless the catalogue points at it
 * (uploads from before keys were copied). Called by a delayed job once the upload's URLs have expired.
 *
 * @returns whether a removal was attempted
 */
export async function removeUploadLeftovers(uploadId: number): Promise<boolean> {
  const upload = await getUploadRecord({ uploadId });
  if (!upload || upload.status === 'open' || upload.status === 'verifying') return false;
  if (upload.rawFileId) {
    const raw = await getRawFileRecord({ rawFileId: upload.rawFileId });
    if (raw?.storageKey === upload.objectKey) return false;
  }
  await deleteObject(upload.bucket, upload.objectKey);
  return true;
}

/** Asks for the leftover removal of an upload that just finished (a queue outage only delays storage hygiene). */
async function scheduleLeftovers(uploadId: number): Promise<void> {
  try {
    const { scheduleUploadLeftoverRemoval } = await import('@/lib/jobs/verify-upload');
    let timer: ReturnType<typeof setTimeout> | undefined;
    // never let an unreachable queue hold up the answer to the browser
    await Promise.race([
      scheduleUploadLeftoverRemoval(uploadId, PRESIGN_SECONDS),
      new Promise((_, reject) => {
        timer = setTimeout(() => reject(new Error('queue did not answer within 2 s')), 2_000);
      }),
    ]).finally(() => clearTimeout(timer));
  } catch (err) {
    ilog.warn('could not schedule the removal of an upload key', { uploadId, err });
  }
}

/** Marks an upload whose queued verification could not run (after every retry) open again, with the reason. */
export async function giveUpQueuedVerification(uploadId: number, sentence: string): Promise<void> {
  await transitionUpload({ uploadId, from: ['verifying'], to: 'open', error: sentence });
}

/**
 * Copy to the stored key, hash and read the copy, catalogue. The upload is `verifying`; on a refusal it ends
 * `failed` with nothing left in the store; on an infrastructure failure it stays `verifying` for the worker to
 * retry (the inline path puts it back to `open` so the browser can complete it again).
 */
async function verifyAndCatalogue(
  actor: Actor,
  upload: UploadRecord,
  shift: ShiftRecord,
  clientSha256: string | null,
  ip: string | undefined,
  inline = true,
): Promise<UploadOutcomeDto> {
  const uploadId = upload.id;
  const storedKey = storedKeyFor(upload.objectKey);
  const scratch = await scratchDir();
  try {
    // 1. Copy inside the store to a key no URL names. A PUT through an old URL after this point changes only the
    // upload key, which is removed below and never read again.
    try {
      await copyObjectAnySize({
        fromBucket: upload.bucket,
        fromKey: upload.objectKey,
        toBucket: upload.bucket,
        toKey: storedKey,
        sizeBytes: upload.sizeBytes,
      });
    } catch (err) {
      // A job run again after a crash: the upload key may be gone but the copy is there.
      if (!(err instanceof AppError && err.code === 'not_found:storage')) throw err;
      await headObject(upload.bucket, storedKey);
    }
    // 2. Hash and read the copy: these bytes are the ones catalogued.
    const local = scratch.file('object.h5');
    const { sha256, bytes } = await downloadAndHash(upload.bucket, storedKey, local);
    if (bytes !== upload.sizeBytes) {
      await failUpload(upload, `Reading the stored object gave ${bytes} bytes, not ${upload.sizeBytes}.`);
    }
    if (clientSha256 && clientSha256 !== sha256) {
      await failUpload(
        upload,
        `The SHA-256 of the stored object (${sha256}) differs from the one your browser computed (${clientSha256}); the transfer was damaged and nothing was stored. Drop the file again.`,
      );
    }
    const outcome = await catalogue(
      actor,
      { ...upload, objectKey: storedKey },
      shift,
      sha256,
      local,
      clientSha256 ?? null,
      ip,
    );
    // The upload key is not needed any more (a duplicate's copy was removed by linkDuplicate).
    await removeUploadObjects(upload, outcome.outcome === 'duplicate' ? undefined : storedKey);
    await scheduleLeftovers(uploadId);
    if (outcome.outcome !== 'quarantined' && outcome.reasons.length === 0 && !outcome.countedAsScanId) {
      await onScanAccepted(outcome.scanId);
    }
    return outcome;
  } catch (err) {
    // An infrastructure failure (database, storage) leaves the upload open so the browser can complete it again.
    if (inline && !(err instanceof AppError && err.surface === 'upload')) {
      await transitionUpload({ uploadId, from: ['verifying'], to: 'open' }).catch(() => undefined);
    }
    throw err;
  } finally {
    await scratch.remove();
  }
}

async function catalogue(
  actor: Actor,
  upload: UploadRecord,
  shift: ShiftRecord,
  sha256: string,
  localPath: string,
  clientSha256: string | null,
  ip: string | undefined,
): Promise<UploadOutcomeDto> {
  const duplicate = await findRawFileBySha256({ sha256 });
  if (duplicate && duplicate.storageKey !== upload.objectKey) {
    return linkDuplicate(actor, upload, shift, duplicate, clientSha256, ip);
  }
  const read = await validateScanPath(localPath);
  const limits = catalogueLimits(read.metadata);
  const validation = { ...read, problems: [...read.problems, ...limits.problems] };
  const status = read.ok && limits.problems.length === 0 ? 'accepted' : 'quarantined';
  const replaces = (upload.precheck as { replacesRawFileId?: unknown } | null)?.replacesRawFileId;
  try {
    const ids = await getDb().transaction(async (transaction) => {
      const created = await insertRawFileAndScan({
        upload,
        campaignId: shift.campaignId,
        sha256,
        status,
        reasons: validation.problems,
        metadata: validation.metadata,
        transaction,
      });
      await setUploadOutcome({ uploadId: upload.id, ...created, clientSha256, transaction });
      const base = { actorId: actor.userId, actorEmail: actor.email, teamId: upload.teamId, ip };
      await recordAudit(
        {
          ...base,
          action: 'file.uploaded',
          targetType: 'raw_file',
          targetId: created.rawFileId,
          details: {
            fileName: upload.fileName,
            sizeBytes: upload.sizeBytes,
            sha256,
            shiftId: shift.id,
            scanId: created.scanId,
          },
        },
        { transaction },
      );
      if (status === 'quarantined') {
        await recordAudit(
          {
            ...base,
            action: 'file.quarantined',
            targetType: 'raw_file',
            targetId: created.rawFileId,
            details: { reasons: validation.problems },
          },
          { transaction },
        );
      }
      if (typeof replaces === 'number' && status === 'accepted') {
        await markRawFileReplaced({ rawFileId: replaces, replacedById: created.rawFileId, transaction });
        await recordAudit(
          {
            ...base,
            action: 'file.replaced',
            targetType: 'raw_file',
            targetId: replaces,
            details: { replacedBy: created.rawFileId },
          },
          { transaction },
        );
      }
      return created;
    });
    return outcomeFrom(upload, {
      outcome: status,
      ...ids,
      sha256,
      sizeBytes: upload.sizeBytes,
      reasons: validation.problems,
      warnings: limits.warnings,
      message:
        status === 'accepted'
          ? 'Verified and catalogued.'
          : 'Stored, but quarantined: the file breaks the scan-file rules listed below.',
    });
  } catch (err) {
    // Two identical files completed at the same moment: the second becomes a linked duplicate.
    if (err instanceof UniqueConstraintError) {
      const now = await findRawFileBySha256({ sha256 });
      if (now && now.storageKey !== upload.objectKey) return linkDuplicate(actor, upload, shift, now, clientSha256, ip);
    }
    throw err;
  }
}

async function linkDuplicate(
  actor: Actor,
  upload: UploadRecord,
  shift: ShiftRecord,
  existing: NonNullable<Awaited<ReturnType<typeof findRawFileBySha256>>>,
  clientSha256: string | null,
  ip: string | undefined,
): Promise<UploadOutcomeDto> {
  const quarantined = existing.status === 'quarantined' || existing.status === 'replaced';
  // Already a scan of this campaign: the new row records that the file was sent in this shift too, but it is not
  // a second scan (the campaign's counts, table and trend count the first one; lib/db/queries/scans.ts), and it is
  // not reduced again.
  const countedAs = await firstScanOfFileInCampaign({ rawFileId: existing.id, campaignId: shift.campaignId });
  const scanId = await getDb().transaction(async (transaction) => {
    const id = await insertScan({
      upload,
      campaignId: shift.campaignId,
      rawFileId: existing.id,
      metadata: existing.metadata,
      status: quarantined ? 'quarantined' : 'uploaded',
      statusMessage: quarantined
        ? (existing.quarantineReasons[0] ?? 'quarantined')
        : countedAs
          ? `Identical to scan ${countedAs} of this campaign; linked to it and counted once, not reduced again.`
          : null,
      transaction,
    });
    await setUploadOutcome({ uploadId: upload.id, rawFileId: existing.id, scanId: id, clientSha256, transaction });
    await recordAudit(
      {
        action: 'file.duplicate_linked',
        actorId: actor.userId,
        actorEmail: actor.email,
        teamId: upload.teamId,
        targetType: 'raw_file',
        targetId: existing.id,
        ip,
        details: {
          fileName: upload.fileName,
          sha256: existing.sha256,
          scanId: id,
          shiftId: shift.id,
          sameTeam: existing.teamId === upload.teamId,
        },
      },
      { transaction },
    );
    return id;
  });
  // The second copy is not kept: the catalogue now points at the stored original.
  await deleteObject(upload.bucket, upload.objectKey).catch((err) =>
    ilog.warn('could not delete the object of a duplicate upload', { uploadId: upload.id, err }),
  );
  return outcomeFrom(upload, {
    outcome: 'duplicate',
    scanId,
    rawFileId: existing.id,
    sha256: existing.sha256,
    sizeBytes: existing.sizeBytes,
    reasons: quarantined ? existing.quarantineReasons : [],
    warnings: catalogueLimits(existing.metadata).warnings,
    message: quarantined
      ? 'Identical to a file already stored (and quarantined); linked to it instead of storing a second copy.'
      : countedAs
        ? `Identical to scan ${countedAs} of this campaign; linked to it and counted once, not as a second scan.`
        : 'Identical to a file already stored; linked to it instead of storing a second copy.',
    countedAsScanId: countedAs,
  });
}

async function previousOutcome(upload: UploadRecord): Promise<UploadOutcomeDto> {
  const files = await listShiftFiles({ shiftId: upload.shiftId });
  const f = files.find((x) => x.rawFileId === upload.rawFileId);
  if (!f) throw new AppError('conflict:upload', { message: 'This upload was already completed.' });
  return outcomeFrom(upload, {
    outcome: f.duplicateLinked ? 'duplicate' : f.rawStatus === 'quarantined' ? 'quarantined' : 'accepted',
    scanId: f.scanId,
    rawFileId: f.rawFileId,
    sha256: f.sha256,
    sizeBytes: f.sizeBytes,
    reasons: f.reasons,
    warnings: f.warnings,
    message: 'This upload was already completed.',
  });
}

// CLOSE AND RECEIPT //

export async function closeShift(
  actor: Actor,
  shiftId: number,
  options: { abandonUnfinished?: boolean },
  ip?: string,
): Promise<{ view: ShiftViewDto; receipt: Receipt; mailed: boolean }> {
  const shift = await loadShift(actor, shiftId);
  authorize(actor, 'shift.close', { teamId: shift.teamId, surface: 'shift' });
  if (shift.status === 'open') {
    const open = await listOpenUploadRecords({ shiftId });
    if (open.some((u) => u.status === 'verifying')) {
      throw new AppError('conflict:shift', {
        message: 'A file is being verified right now; close the shift when it is done.',
      });
    }
    if (open.length && !options.abandonUnfinished) {
      throw new AppError('conflict:shift', {
        message: `${open.length} upload${open.length === 1 ? ' has' : 's have'} not finished. Finish ${open.length === 1 ? 'it' : 'them'} first, or close anyway to abandon ${open.length === 1 ? 'it' : 'them'}.`,
        details: open.map((u) => `${u.fileName}: not finished`),
      });
    }
    for (const u of open) await discardUpload(u, ABANDONED_AT_CLOSE);
    if (await closeShiftRow({ shiftId, userId: actor.userId })) {
      await recordAudit({
        action: 'shift.closed',
        actorId: actor.userId,
        actorEmail: actor.email,
        teamId: shift.teamId,
        targetType: 'shift',
        targetId: shiftId,
        ip,
        details: { abandoned: open.map((u) => u.fileName) },
      });
    }
  }
  const after = await loadShift(actor, shiftId);
  const view = await getShiftView(actor, shiftId);
  const receipt = buildReceipt(view, getEnv().APP_ORIGIN, await listAbandonedUploads({ shiftId }));
  let mailed = !!after.header.receiptSentAt;
  if (!mailed) {
    const analysts = await listTeamAnalystEmails({ teamId: shift.teamId });
    // C11: people who turned shift receipts off in their notification settings are left out.
    const to = await recipientsWanting([actor.email, ...analysts], 'shift_receipt');
    if (to.length)
      try {
        await sendMail({ to, subject: receipt.subject, text: receiptText(receipt), html: receiptHtml(receipt) });
        await markReceiptSent({ shiftId });
        mailed = true;
      } catch (err) {
        // The shift stays closed; the page offers to send the receipt again.
        ilog.error('shift receipt could not be sent', { shiftId, err });
      }
  }
  return { view: await getShiftView(actor, shiftId), receipt, mailed };
}

export async function getShiftReceipt(actor: Actor, shiftId: number): Promise<Receipt> {
  const view = await getShiftView(actor, shiftId);
  return buildReceipt(view, getEnv().APP_ORIGIN, await listAbandonedUploads({ shiftId }));
}

// LOG //

export async function addLogEntry(
  actor: Actor,
  shiftId: number,
  body: LogEntryBody,
  ip?: string,
): Promise<LogEntryDto> {
  const shift = await loadShift(actor, shiftId);
  authorize(actor, 'shift.log', { teamId: shift.teamId, surface: 'shift' });
  requireOpen(shift);
  const v = body.detectorVoltages;
  const voltages = v && Object.values(v).some((x) => x !== undefined) ? (v as Record<string, number>) : null;
  const entry = await insertLogEntry({
    shiftId,
    authorId: actor.userId,
    notedAt: body.notedAt ? new Date(body.notedAt) : new Date(),
    text: body.text,
    target: body.target ?? null,
    wavelengthNm: body.wavelengthNm ?? null,
    pulseEnergyUj: body.pulseEnergyUj ?? null,
    ellipticity: body.ellipticity ?? null,
    detectorVoltages: voltages,
  });
  await recordAudit({
    action: 'shift.log_added',
    actorId: actor.userId,
    actorEmail: actor.email,
    teamId: shift.teamId,
    targetType: 'shift',
    targetId: shiftId,
    ip,
    details: { entryId: entry.id },
  });
  return entry;
}

// RELEASE //

export async function releaseRawFile(
  actor: Actor,
  rawFileId: number,
  body: ReleaseBody,
  ip?: string,
): Promise<{ rawFileId: number; scanIds: number[]; status: 'released' }> {
  const raw = await getRawFileRecord({ rawFileId });
  if (!raw) throw new AppError('not_found:upload', { message: 'There is no such file.' });
  // 404 for a team the actor may not see; a steward sees every team's raw files (C10) and is refused with 403.
  authorizeObject(actor, 'quarantine.release', { teamId: raw.teamId, surface: 'upload' });
  if (raw.status !== 'quarantined') {
    throw new AppError('conflict:upload', {
      message: `This file is ${raw.status}, not quarantined; there is nothing to release.`,
    });
  }
  let metadata = null;
  let note: string;
  if (body.mode === 'revalidate') {
    const scratch = await scratchDir();
    try {
      const local = scratch.file('object.h5');
      const { sha256 } = await downloadAndHash(raw.bucket, raw.storageKey, local);
      if (sha256 !== raw.sha256) {
        throw new AppError('conflict:upload', {
          message:
            'The stored bytes no longer match their recorded SHA-256; the file was not released. Tell the data steward.',
        });
      }
      const v = await validateScanPath(local, body.metadataOverride);
      if (!v.ok) {
        throw new AppError('bad_request:upload', {
          message: 'With the corrected metadata the file is still refused.',
          details: v.problems,
        });
      }
      metadata = v.metadata;
    } finally {
      await scratch.remove();
    }
    note = body.note?.trim() || `Metadata corrected: ${Object.keys(body.metadataOverride).join(', ')}.`;
  } else {
    note = body.reason;
  }
  const scanIds = await getDb().transaction(async (transaction) => {
    const ids = await releaseRawFileRows({
      rawFileId,
      userId: actor.userId,
      metadata,
      override: body.mode === 'revalidate' ? body.metadataOverride : null,
      note,
      transaction,
    });
    await recordAudit(
      {
        action: 'file.released',
        actorId: actor.userId,
        actorEmail: actor.email,
        teamId: raw.teamId,
        targetType: 'raw_file',
        targetId: rawFileId,
        ip,
        details: {
          mode: body.mode,
          note,
          override: body.mode === 'revalidate' ? body.metadataOverride : null,
          reasonsBefore: raw.quarantineReasons,
        },
      },
      { transaction },
    );
    return ids;
  });
  for (const id of scanIds) await onScanAccepted(id);
  return { rawFileId, scanIds, status: 'released' };
}
