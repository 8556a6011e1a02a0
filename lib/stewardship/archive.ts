// Archive and restore of stored raw files (C10, issue 14). A data steward (or an administrator) asks for a file or a
// whole campaign to be archived; a job moves each file's bytes from the raw bucket to the archive bucket in the
// archival storage class (lib/env.ts LOBELINE_ARCHIVE_STORAGE_CLASS), and a restore moves them back.
//
// The job is a sequence of steps, each safe to run again, so that a worker killed at any point (SIGKILL, power loss)
// leaves work another worker finishes without losing a byte:
//   1. copy   the object to the other place (skipped when a copy of the right size is already there);
//   2. verify the copy's SHA-256 and size against the checksum recorded when the file was catalogued;
//   3. mark   the new state in MariaDB (audited with the checksum), in one transaction;
//   4. remove the object from the old place.
// The object is removed from the old place only after the new place holds verified bytes and MariaDB says so; a
// resumed job that finds the state already marked goes straight to step 4. A copy that does not verify is removed
// and made again on the next attempt; if the original itself no longer matches its checksum the job stops, keeps the
// original where it is and flags the file for the steward.
import type { StorageClass } from '@aws-sdk/client-s3';
import { QueryTypes } from 'sequelize';
import { recordAudit } from '@/lib/audit';
import { getDb } from '@/lib/db';
import { getEnv } from '@/lib/env';
import { AppError, isAppError } from '@/lib/errors';
import { hashObjectRanged } from '@/lib/ingest/verify';
import { log } from '@/lib/log';
import { buckets, copyObjectAnySize, deleteObject, headObject } from '@/lib/storage/s3';
import { type ArchiveState, DeletionRequest, RawFile } from '@/models';

const alog = log.child({ surface: 'archive' });

type ActorRef = { userId: number; email: string };

export { ARCHIVE_STATE_WORDS, ARCHIVED_REDUCTION_MESSAGE } from './archive-words';

/** Where an object of a file is now (the fixity checks read from here too). */
export function currentPlace(
  f: Pick<RawFile, 'archive_state' | 'bucket' | 'storage_key' | 'archive_bucket' | 'archive_key'>,
) {
  return f.archive_state === 'archived' && f.archive_bucket && f.archive_key
    ? { bucket: f.archive_bucket, key: f.archive_key }
    : { bucket: f.bucket, key: f.storage_key };
}

async function guard<T>(what: string, fn: () => Promise<T>): Promise<T> {
  try {
    getDb();
    return await fn();
  } catch (err) {
    if (err instanceof AppError) throw err;
    const name = (err as Error)?.name ?? '';
    throw new AppError(/Connection|Timeout/.test(name) ? 'unavailable:database' : 'internal:database', {
      cause: err,
      context: { what },
    });
  }
}

// REQUESTS (web side) //

export type MoveKind = 'archive' | 'restore';

export interface MoveRequestOutcome {
  rawFileId: number;
  state: ArchiveState;
  /** False when the file was already in (or moving to) the asked-for state: nothing new was started. */
  started: boolean;
}

/**
 * Marks one file `archiving` (or `restoring`) and records who asked, in one transaction. The caller queues the
 * job afterwards (lib/jobs/archive.ts). Asking again while the job runs is not an error: the same job goes on.
 */
export async function markMoveRequested(input: {
  rawFileId: number;
  kind: MoveKind;
  actor: ActorRef;
  ip: string | null;
  /** Set when the request came from a campaign-wide archive or restore. */
  campaignId?: number | null;
}): Promise<MoveRequestOutcome> {
  return guard('markMoveRequested', () =>
    getDb().transaction(async (transaction) => {
      const f = await RawFile.findByPk(input.rawFileId, { transaction, lock: transaction.LOCK.UPDATE });
      if (!f || f.deleted_at) throw new AppError('not_found:upload', { message: 'There is no such file.' });
      const moving = input.kind === 'archive' ? 'archiving' : 'restoring';
      const target = input.kind === 'archive' ? 'archived' : 'online';
      if (f.archive_state === moving || f.archive_state === target) {
        return { rawFileId: f.id, state: f.archive_state, started: false };
      }
      if (f.archive_state !== (input.kind === 'archive' ? 'online' : 'archived')) {
        throw new AppError('conflict:archive', {
          message:
            f.archive_state === 'archiving'
              ? 'This file is being archived; it can be restored once the archive copy is verified.'
              : 'This file is being restored; it can be archived again once it is back online.',
        });
      }
      if (input.kind === 'archive') {
        if (f.status === 'quarantined') {
          throw new AppError('conflict:archive', {
            message: 'A quarantined file is not archived: release it or replace it first.',
          });
        }
        const deletion = await DeletionRequest.findOne({
          where: { raw_file_id: f.id, cancelled_at: null, object_removed_at: null },
          transaction,
        });
        if (deletion?.confirmed_at) {
          throw new AppError('conflict:archive', {
            message: 'The deletion of this file has been confirmed; it is not archived.',
          });
        }
      }
      const archiveBucket = f.archive_bucket ?? buckets().archive;
      const archiveKey = f.archive_key ?? f.storage_key;
      const storageClass = getEnv().LOBELINE_ARCHIVE_STORAGE_CLASS;
      await f.update(
        input.kind === 'archive'
          ? { archive_state: 'archiving', archive_bucket: archiveBucket, archive_key: archiveKey }
          : { archive_state: 'restoring' },
        { transaction },
      );
      await recordAudit(
        {
          action: input.kind === 'archive' ? 'file.archive_requested' : 'file.restore_requested',
          actorId: input.actor.userId,
          actorEmail: input.actor.email,
          teamId: f.team_id,
          targetType: 'raw_file',
          targetId: f.id,
          ip: input.ip,
          details: {
            sha256: f.sha256,
            from: input.kind === 'archive' ? `${f.bucket}/${f.storage_key}` : `${archiveBucket}/${archiveKey}`,
            to: input.kind === 'archive' ? `${archiveBucket}/${archiveKey}` : `${f.bucket}/${f.storage_key}`,
            ...(input.kind === 'archive' ? { storageClass } : {}),
            ...(input.campaignId ? { campaignId: input.campaignId } : {}),
          },
        },
        { transaction },
      );
      return { rawFileId: f.id, state: moving, started: true };
    }),
  );
}

/** Stored files of a campaign (the campaign of their first scan, as in the file register), with their states. */
export async function campaignFiles(campaignId: number): Promise<{ id: number; state: ArchiveState; size: number }[]> {
  return guard('campaignFiles', async () => {
    const rows = await getDb().query<{ id: number; archive_state: ArchiveState; size_bytes: number | string }>(
      `SELECT rf.id, rf.archive_state, rf.size_bytes FROM raw_files rf
        WHERE rf.deleted_at IS NULL
          AND (SELECT s.campaign_id FROM scans s WHERE s.raw_file_id = rf.id ORDER BY s.id LIMIT 1) = :campaignId
        ORDER BY rf.id`,
      { replacements: { campaignId }, type: QueryTypes.SELECT },
    );
    return rows.map((r) => ({ id: r.id, state: r.archive_state, size: Number(r.size_bytes) }));
  });
}

export interface CampaignArchiveProgress {
  campaignId: number;
  files: number;
  bytes: number;
  byState: Record<ArchiveState, number>;
  bytesByState: Record<ArchiveState, number>;
}

/** How many of a campaign's files are in each state (the progress of a campaign-wide archive or restore). */
export async function campaignArchiveProgress(campaignId: number): Promise<CampaignArchiveProgress> {
  const files = await campaignFiles(campaignId);
  const byState: Record<ArchiveState, number> = { online: 0, archiving: 0, archived: 0, restoring: 0 };
  const bytesByState: Record<ArchiveState, number> = { online: 0, archiving: 0, archived: 0, restoring: 0 };
  for (const f of files) {
    byState[f.state] += 1;
    bytesByState[f.state] += f.size;
  }
  return { campaignId, files: files.length, bytes: files.reduce((s, f) => s + f.size, 0), byState, bytesByState };
}

// THE JOB (worker side) //

export interface MoveHooks {
  /** Fraction 0…1 of the job done (copy 0–0.5, verify 0.5–0.95, mark and remove the rest). */
  progress?: (fraction: number) => Promise<void> | void;
  /** Awaited after each copied part of a multipart copy (tests stop the worker here). */
  onCopyPart?: (done: { partNumber: number; parts: number }) => Promise<void> | void;
  /** Whether this is the job's last attempt: a failure then puts the file back where it was. */
  lastAttempt?: boolean;
}

export type MoveOutcome = 'archived' | 'restored' | 'nothing_to_do' | 'given_up';

/** A failure that no retry can fix (the job stops at once and the file stays where it was). */
export class MoveRefusedError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'MoveRefusedError';
  }
}

async function exists(bucket: string, key: string): Promise<number | null> {
  try {
    return (await headObject(bucket, key)).size;
  } catch (err) {
    if (isAppError(err) && err.code === 'not_found:storage') return null;
    throw err;
  }
}

async function removeQuietly(bucket: string, key: string): Promise<void> {
  try {
    await deleteObject(bucket, key);
  } catch (err) {
    if (!(isAppError(err) && err.code === 'not_found:storage')) throw err;
  }
}

async function auditFailure(f: RawFile, kind: MoveKind, reason: string): Promise<void> {
  await recordAudit({
    action: kind === 'archive' ? 'file.archive_failed' : 'file.restore_failed',
    teamId: f.team_id,
    targetType: 'raw_file',
    targetId: f.id,
    outcome: 'failed',
    details: { sha256: f.sha256, reason },
  });
}

/**
 * Puts a file whose move failed for good back into the state it left, keeping the bytes where they were verified.
 * An archive copy that was never marked is removed (it is not verified, or not needed); a restore keeps the archive.
 */
export async function giveUpMove(rawFileId: number, kind: MoveKind, reason: string): Promise<void> {
  getDb();
  const f = await RawFile.findByPk(rawFileId);
  if (!f) return;
  const moving = kind === 'archive' ? 'archiving' : 'restoring';
  if (f.archive_state !== moving) return;
  if (kind === 'archive' && f.archive_bucket && f.archive_key) {
    await removeQuietly(f.archive_bucket, f.archive_key).catch((err) =>
      alog.warn('could not remove an unverified archive copy', { rawFileId, err }),
    );
    await f.update({ archive_state: 'online', archive_bucket: null, archive_key: null });
  } else if (kind === 'restore') {
    // Only the archive copy is verified: the raw bucket's partial copy (if any) goes, the file stays archived.
    await removeQuietly(f.bucket, f.storage_key).catch((err) =>
      alog.warn('could not remove an unverified restored copy', { rawFileId, err }),
    );
    await f.update({ archive_state: 'archived' });
  }
  await auditFailure(f, kind, reason);
}

/**
 * Runs (or resumes) the archive or restore of one file. Idempotent: safe to call any number of times, from any
 * worker, at any point of an earlier run that was cut off.
 */
export async function runMove(rawFileId: number, kind: MoveKind, hooks: MoveHooks = {}): Promise<MoveOutcome> {
  getDb(); // the models are initialised with the connection (a worker process may not have touched it yet)
  const f = await RawFile.findByPk(rawFileId);
  if (!f || f.deleted_at) return 'nothing_to_do';
  const env = getEnv();
  const moving = kind === 'archive' ? 'archiving' : 'restoring';
  const done = kind === 'archive' ? 'archived' : 'online';
  const online = { bucket: f.bucket, key: f.storage_key };
  if (!f.archive_bucket || !f.archive_key) {
    if (f.archive_state === moving) throw new MoveRefusedError('The file has no archive place recorded.');
    return 'nothing_to_do';
  }
  const archived = { bucket: f.archive_bucket, key: f.archive_key };
  const from = kind === 'archive' ? online : archived;
  const to = kind === 'archive' ? archived : online;
  const expected = { sha256: f.sha256, sizeBytes: Number(f.size_bytes) };

  if (f.archive_state === done) {
    // Steps 1–3 were done by an earlier run; finish step 4.
    await removeQuietly(from.bucket, from.key);
    if (kind === 'restore') await f.update({ archive_bucket: null, archive_key: null });
    await hooks.progress?.(1);
    return kind === 'archive' ? 'archived' : 'restored';
  }
  if (f.archive_state !== moving) return 'nothing_to_do';

  // 1. copy (unless a copy of the right size is already there; step 2 checks its bytes either way)
  const sizeThere = await exists(to.bucket, to.key);
  if (sizeThere !== expected.sizeBytes) {
    const sizeHere = await exists(from.bucket, from.key);
    if (sizeHere === null) {
      throw new MoveRefusedError(
        `The stored object ${from.bucket}/${from.key} is missing, so it could not be ${kind === 'archive' ? 'archived' : 'restored'}.`,
      );
    }
    const partBytes = env.LOBELINE_ARCHIVE_PART_MIB * 1024 * 1024;
    await copyObjectAnySize({
      fromBucket: from.bucket,
      fromKey: from.key,
      toBucket: to.bucket,
      toKey: to.key,
      sizeBytes: sizeHere,
      singleMaxBytes: partBytes,
      partBytes,
      storageClass: (kind === 'archive' ? env.LOBELINE_ARCHIVE_STORAGE_CLASS : 'STANDARD') as StorageClass,
      onPart: async (p) => {
        await hooks.progress?.(0.5 * (p.partNumber / p.parts));
        await hooks.onCopyPart?.({ partNumber: p.partNumber, parts: p.parts });
      },
    });
  }
  await hooks.progress?.(0.5);

  // 2. verify the copy against the catalogue's checksum
  const copy = await hashObjectRanged(to.bucket, to.key);
  if (copy.sha256 !== expected.sha256 || copy.bytes !== expected.sizeBytes) {
    await removeQuietly(to.bucket, to.key);
    const source = await hashObjectRanged(from.bucket, from.key);
    if (source.sha256 !== expected.sha256 || source.bytes !== expected.sizeBytes) {
      await f.update({ fixity_flagged_at: new Date(), last_fixity_ok: false, last_fixity_at: new Date() });
      throw new MoveRefusedError(
        `The ${kind === 'archive' ? 'stored original' : 'archive copy'} no longer matches its recorded SHA-256 ` +
          `(${expected.sha256}; found ${source.sha256}, ${source.bytes} bytes), so it was left where it is and flagged. ` +
          'Tell the data steward.',
      );
    }
    throw new Error(`the new copy did not verify (found ${copy.sha256}, ${copy.bytes} bytes); it is copied again`);
  }
  await hooks.progress?.(0.95);

  // 3. mark (and audit, in the same transaction)
  const marked = await getDb().transaction(async (transaction) => {
    const row = await RawFile.findByPk(rawFileId, { transaction, lock: transaction.LOCK.UPDATE });
    if (!row || row.archive_state !== moving) return false;
    await row.update(
      kind === 'archive'
        ? { archive_state: 'archived', archived_at: new Date(), storage_class: env.LOBELINE_ARCHIVE_STORAGE_CLASS }
        : { archive_state: 'online', archived_at: null, storage_class: 'STANDARD' },
      { transaction },
    );
    await recordAudit(
      {
        action: kind === 'archive' ? 'file.archived' : 'file.restored',
        teamId: row.team_id,
        targetType: 'raw_file',
        targetId: row.id,
        details: {
          sha256: row.sha256,
          verifiedSha256: copy.sha256,
          bytes: copy.bytes,
          from: `${from.bucket}/${from.key}`,
          to: `${to.bucket}/${to.key}`,
          storageClass: kind === 'archive' ? env.LOBELINE_ARCHIVE_STORAGE_CLASS : 'STANDARD',
        },
      },
      { transaction },
    );
    return true;
  });
  if (!marked) return 'nothing_to_do';

  // 4. remove the old place
  await removeQuietly(from.bucket, from.key);
  if (kind === 'restore')
    await RawFile.update({ archive_bucket: null, archive_key: null }, { where: { id: rawFileId } });
  await hooks.progress?.(1);
  return kind === 'archive' ? 'archived' : 'restored';
}

/** Files left `archiving` or `restoring` (their jobs may have left the queue with a lost Redis): for the sweep. */
export async function filesInMotion(olderThanMs: number): Promise<{ id: number; kind: MoveKind }[]> {
  const rows = await getDb().query<{ id: number; archive_state: ArchiveState }>(
    `SELECT id, archive_state FROM raw_files
      WHERE archive_state IN ('archiving', 'restoring') AND deleted_at IS NULL
        AND updated_at < UTC_TIMESTAMP(3) - INTERVAL :ms * 1000 MICROSECOND
      ORDER BY id LIMIT 500`,
    { replacements: { ms: Math.max(0, Math.floor(olderThanMs)) }, type: QueryTypes.SELECT },
  );
  return rows.map((r) => ({ id: r.id, kind: r.archive_state === 'archiving' ? 'archive' : 'restore' }));
}
