import 'server-only';
// Retention, embargo and legal hold (per campaign and per file) and the two-step deletion of a stored raw file (C10,
// issue 14): a data steward asks, a PI of the file's team or an administrator (another person) confirms, and only
// then is the stored object removed. Every state change is audited with the file's SHA-256; the rules of
// lib/stewardship/deletion-rules.ts are checked at both steps, inside a transaction holding the file's row lock.
import { QueryTypes, type Transaction } from 'sequelize';
import { recordAudit } from '@/lib/audit';
import { getDb } from '@/lib/db';
import { AppError } from '@/lib/errors';
import { log } from '@/lib/log';
import { currentPlace } from '@/lib/stewardship/archive';
import { deletionBlockers, effectiveRetention } from '@/lib/stewardship/deletion-rules';
import { deleteObject } from '@/lib/storage/s3';
import { Campaign, DeletionRequest, RawFile, User } from '@/models';

type ActorRef = { userId: number; email: string };

const today = () => new Date().toISOString().slice(0, 10);
const day = (v: string | Date | null | undefined) =>
  v == null ? null : typeof v === 'string' ? v.slice(0, 10) : v.toISOString().slice(0, 10);

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

// RETENTION AND EMBARGO //

export interface RetentionInput {
  retentionUntil: string | null;
  embargoUntil: string | null;
  legalHold: boolean;
  legalHoldNote?: string | null;
}

export async function setCampaignRetention(input: {
  campaignId: number;
  teamId: number;
  values: RetentionInput;
  actor: ActorRef;
  ip: string | null;
}) {
  return guard('setCampaignRetention', () =>
    getDb().transaction(async (transaction) => {
      const c = await Campaign.findByPk(input.campaignId, { transaction, lock: transaction.LOCK.UPDATE });
      if (!c) throw new AppError('not_found:campaign');
      const before = {
        retentionUntil: day(c.retention_until),
        embargoUntil: day(c.embargo_until),
        legalHold: !!c.legal_hold,
      };
      const v = input.values;
      await c.update(
        {
          retention_until: v.retentionUntil,
          embargo_until: v.embargoUntil,
          legal_hold: v.legalHold,
          legal_hold_note: v.legalHold ? (v.legalHoldNote ?? null) : null,
        },
        { transaction },
      );
      await recordAudit(
        {
          action: 'campaign.retention_set',
          actorId: input.actor.userId,
          actorEmail: input.actor.email,
          teamId: input.teamId,
          targetType: 'campaign',
          targetId: input.campaignId,
          ip: input.ip,
          details: { before, after: v },
        },
        { transaction },
      );
      return {
        campaignId: c.id,
        retentionUntil: v.retentionUntil,
        embargoUntil: v.embargoUntil,
        legalHold: v.legalHold,
        legalHoldNote: v.legalHold ? (v.legalHoldNote ?? null) : null,
      };
    }),
  );
}

/** The team of a raw file, or 404 (also for a deleted file's id: it is gone from the catalogue's view). */
export async function getRawFileTeamId({ rawFileId }: { rawFileId: number }): Promise<number> {
  return guard('getRawFileTeamId', async () => {
    const f = await RawFile.findByPk(rawFileId, { attributes: ['team_id'] });
    if (!f) throw new AppError('not_found:upload', { message: 'There is no such file.' });
    return f.team_id;
  });
}

export async function setFileRetention(input: {
  rawFileId: number;
  teamId: number;
  values: Omit<RetentionInput, 'legalHoldNote'>;
  actor: ActorRef;
  ip: string | null;
}) {
  return guard('setFileRetention', () =>
    getDb().transaction(async (transaction) => {
      const f = await RawFile.findByPk(input.rawFileId, { transaction, lock: transaction.LOCK.UPDATE });
      if (!f) throw new AppError('not_found:upload', { message: 'There is no such file.' });
      const before = {
        retentionUntil: day(f.retention_until),
        embargoUntil: day(f.embargo_until),
        legalHold: !!f.legal_hold,
      };
      const v = input.values;
      await f.update(
        { retention_until: v.retentionUntil, embargo_until: v.embargoUntil, legal_hold: v.legalHold },
        { transaction },
      );
      await recordAudit(
        {
          action: 'file.retention_set',
          actorId: input.actor.userId,
          actorEmail: input.actor.email,
          teamId: input.teamId,
          targetType: 'raw_file',
          targetId: input.rawFileId,
          ip: input.ip,
          details: { sha256: f.sha256, before, after: v },
        },
        { transaction },
      );
      return { rawFileId: f.id, ...v };
    }),
  );
}

// DELETION //

interface Subject {
  file: RawFile;
  campaignRetention: string | null;
  campaignLegalHold: boolean;
}

/** The file (locked) with its campaign's retention and hold (the campaign of its first scan). */
async function lockSubject(rawFileId: number, transaction: Transaction): Promise<Subject> {
  const file = await RawFile.findByPk(rawFileId, { transaction, lock: transaction.LOCK.UPDATE });
  if (!file) throw new AppError('not_found:upload', { message: 'There is no such file.' });
  const rows = await getDb().query<{ retention_until: string | Date | null; legal_hold: number | boolean | null }>(
    `SELECT c.retention_until, c.legal_hold FROM campaigns c
      WHERE c.id = (SELECT s.campaign_id FROM scans s WHERE s.raw_file_id = :id ORDER BY s.id LIMIT 1)`,
    { replacements: { id: rawFileId }, type: QueryTypes.SELECT, transaction },
  );
  return {
    file,
    campaignRetention: day(rows[0]?.retention_until ?? null),
    campaignLegalHold: !!rows[0]?.legal_hold,
  };
}

function blockersOf(s: Subject): string[] {
  return deletionBlockers(
    {
      retentionUntil: effectiveRetention(day(s.file.retention_until), s.campaignRetention),
      fileLegalHold: !!s.file.legal_hold,
      campaignLegalHold: s.campaignLegalHold,
      deleted: s.file.deleted_at !== null,
    },
    today(),
  );
}

function refuse(blockers: string[]): never {
  throw new AppError('conflict:archive', { message: blockers.join(' '), details: blockers.map((b) => `file: ${b}`) });
}

export interface DeletionRequestDto {
  id: number;
  rawFileId: number;
  teamId: number;
  fileName: string;
  sha256: string;
  reason: string;
  requestedBy: string | null;
  requestedById: number | null;
  requestedAt: string;
  confirmedBy: string | null;
  confirmedAt: string | null;
  objectRemovedAt: string | null;
  cancelledAt: string | null;
  state: 'waiting' | 'confirmed' | 'deleted' | 'withdrawn';
}

async function toDto(r: DeletionRequest): Promise<DeletionRequestDto> {
  const file = await RawFile.findByPk(r.raw_file_id, { attributes: ['team_id', 'original_name', 'sha256'] });
  const names = new Map(
    (
      await User.findAll({
        where: { id: [r.requested_by, r.confirmed_by].filter((x): x is number => x !== null) },
        attributes: ['id', 'name'],
      })
    ).map((u) => [u.id, u.name]),
  );
  return {
    id: r.id,
    rawFileId: r.raw_file_id,
    teamId: file?.team_id ?? 0,
    fileName: file?.original_name ?? '',
    sha256: file?.sha256 ?? '',
    reason: r.reason,
    requestedBy: r.requested_by ? (names.get(r.requested_by) ?? null) : null,
    requestedById: r.requested_by,
    requestedAt: new Date(r.created_at).toISOString(),
    confirmedBy: r.confirmed_by ? (names.get(r.confirmed_by) ?? null) : null,
    confirmedAt: r.confirmed_at ? new Date(r.confirmed_at).toISOString() : null,
    objectRemovedAt: r.object_removed_at ? new Date(r.object_removed_at).toISOString() : null,
    cancelledAt: r.cancelled_at ? new Date(r.cancelled_at).toISOString() : null,
    state: r.cancelled_at ? 'withdrawn' : r.object_removed_at ? 'deleted' : r.confirmed_at ? 'confirmed' : 'waiting',
  };
}

/** Step one: a data steward asks for the deletion, with a reason. */
export async function requestDeletion(input: {
  rawFileId: number;
  teamId: number;
  reason: string;
  actor: ActorRef;
  ip: string | null;
}): Promise<DeletionRequestDto> {
  const row = await guard('requestDeletion', () =>
    getDb().transaction(async (transaction) => {
      const subject = await lockSubject(input.rawFileId, transaction);
      const blockers = blockersOf(subject);
      if (blockers.length) refuse(blockers);
      const open = await DeletionRequest.findOne({
        where: { raw_file_id: input.rawFileId, cancelled_at: null, object_removed_at: null },
        transaction,
      });
      if (open) {
        throw new AppError('conflict:archive', {
          message: 'A deletion of this file has already been asked for and waits for its confirmation.',
        });
      }
      const r = await DeletionRequest.create(
        {
          raw_file_id: input.rawFileId,
          requested_by: input.actor.userId,
          confirmed_by: null,
          reason: input.reason,
          confirmed_at: null,
          cancelled_at: null,
        },
        { transaction },
      );
      await recordAudit(
        {
          action: 'file.deletion_requested',
          actorId: input.actor.userId,
          actorEmail: input.actor.email,
          teamId: input.teamId,
          targetType: 'raw_file',
          targetId: input.rawFileId,
          ip: input.ip,
          details: { requestId: r.id, sha256: subject.file.sha256, reason: input.reason },
        },
        { transaction },
      );
      return r;
    }),
  );
  return toDto(row);
}

/** The request with its file's team, or 404. */
export async function getDeletionRequestTeam({ requestId }: { requestId: number }) {
  return guard('getDeletionRequestTeam', async () => {
    const r = await DeletionRequest.findByPk(requestId);
    if (!r) throw new AppError('not_found:archive', { message: 'There is no such deletion request.' });
    const teamId = await getRawFileTeamId({ rawFileId: r.raw_file_id });
    return { teamId, requestedBy: r.requested_by };
  });
}

/**
 * Step two: a PI of the file's team or an administrator, never the person who asked, confirms; the rules are
 * checked again (a legal hold may have been set since). Then the stored object is removed and the file marked
 * deleted. If the storage does not answer, the confirmation stands and confirming again retries the removal.
 */
export async function confirmDeletion(input: {
  requestId: number;
  teamId: number;
  actor: ActorRef;
  ip: string | null;
}): Promise<DeletionRequestDto> {
  const target = await guard('confirmDeletion', () =>
    getDb().transaction(async (transaction) => {
      const r = await DeletionRequest.findByPk(input.requestId, { transaction, lock: transaction.LOCK.UPDATE });
      if (!r) throw new AppError('not_found:archive', { message: 'There is no such deletion request.' });
      if (r.cancelled_at) throw new AppError('conflict:archive', { message: 'This deletion request was withdrawn.' });
      if (r.object_removed_at)
        throw new AppError('conflict:archive', { message: 'This file has already been deleted.' });
      const subject = await lockSubject(r.raw_file_id, transaction);
      if (!r.confirmed_at) {
        if (r.requested_by === input.actor.userId) {
          throw new AppError('conflict:archive', {
            message:
              'A deletion needs two people: you asked for this one, so a PI of the team or an administrator confirms it.',
          });
        }
        const blockers = blockersOf(subject);
        if (blockers.length) refuse(blockers);
        await r.update({ confirmed_by: input.actor.userId, confirmed_at: new Date() }, { transaction });
        await recordAudit(
          {
            action: 'file.deletion_confirmed',
            actorId: input.actor.userId,
            actorEmail: input.actor.email,
            teamId: input.teamId,
            targetType: 'raw_file',
            targetId: r.raw_file_id,
            ip: input.ip,
            details: { requestId: r.id, sha256: subject.file.sha256, requestedBy: r.requested_by },
          },
          { transaction },
        );
      }
      if (subject.file.archive_state === 'archiving' || subject.file.archive_state === 'restoring') {
        throw new AppError('conflict:archive', {
          message: 'This file is being moved to or from the archive; confirm the deletion once the move is done.',
        });
      }
      // An archived file's object is in the archive bucket (lib/stewardship/archive.ts).
      const place = currentPlace(subject.file);
      return {
        rawFileId: r.raw_file_id,
        bucket: place.bucket,
        key: place.key,
        sha256: subject.file.sha256,
      };
    }),
  );
  // The object goes only now, after the confirmation is committed.
  try {
    await deleteObject(target.bucket, target.key);
  } catch (err) {
    log.error('deletion: object removal failed', { err, requestId: input.requestId });
    throw new AppError('unavailable:storage', {
      message:
        'The deletion is confirmed, but the storage did not answer, so the file is still there. Confirm again in a few minutes to finish it.',
      cause: err,
    });
  }
  const row = await guard('confirmDeletion.finish', () =>
    getDb().transaction(async (transaction) => {
      const r = await DeletionRequest.findByPk(input.requestId, { transaction, lock: transaction.LOCK.UPDATE });
      if (!r) throw new AppError('not_found:archive');
      if (r.object_removed_at) return r;
      const now = new Date();
      await r.update({ object_removed_at: now }, { transaction });
      await RawFile.update({ deleted_at: now }, { where: { id: target.rawFileId }, transaction });
      await recordAudit(
        {
          action: 'file.deleted',
          actorId: input.actor.userId,
          actorEmail: input.actor.email,
          teamId: input.teamId,
          targetType: 'raw_file',
          targetId: target.rawFileId,
          ip: input.ip,
          details: { requestId: r.id, sha256: target.sha256, bucket: target.bucket, key: target.key },
        },
        { transaction },
      );
      return r;
    }),
  );
  return toDto(row);
}

/** Withdrawn by the steward who asked, or refused by someone who could confirm it; audited with the reason. */
export async function cancelDeletion(input: {
  requestId: number;
  teamId: number;
  reason: string;
  actor: ActorRef;
  ip: string | null;
}): Promise<DeletionRequestDto> {
  const row = await guard('cancelDeletion', () =>
    getDb().transaction(async (transaction) => {
      const r = await DeletionRequest.findByPk(input.requestId, { transaction, lock: transaction.LOCK.UPDATE });
      if (!r) throw new AppError('not_found:archive', { message: 'There is no such deletion request.' });
      if (r.cancelled_at || r.confirmed_at) {
        throw new AppError('conflict:archive', {
          message: r.cancelled_at
            ? 'This deletion request was already withdrawn.'
            : 'This deletion is already confirmed and can no longer be withdrawn.',
        });
      }
      await r.update({ cancelled_at: new Date() }, { transaction });
      const file = await RawFile.findByPk(r.raw_file_id, { transaction, attributes: ['sha256'] });
      const own = r.requested_by === input.actor.userId;
      await recordAudit(
        {
          action: own ? 'file.deletion_cancelled' : 'file.deletion_refused',
          actorId: input.actor.userId,
          actorEmail: input.actor.email,
          teamId: input.teamId,
          targetType: 'raw_file',
          targetId: r.raw_file_id,
          ip: input.ip,
          details: { requestId: r.id, sha256: file?.sha256 ?? null, reason: input.reason },
        },
        { transaction },
      );
      return r;
    }),
  );
  return toDto(row);
}

/** Requests that wait for a confirmation (or for the removal to finish), of the given teams or all. */
export async function listOpenDeletionRequests({
  teamIds,
}: {
  teamIds: number[] | 'all';
}): Promise<DeletionRequestDto[]> {
  return guard('listOpenDeletionRequests', async () => {
    const rows = await getDb().query<{ id: number }>(
      `SELECT d.id FROM deletion_requests d JOIN raw_files rf ON rf.id = d.raw_file_id
        WHERE d.cancelled_at IS NULL AND d.object_removed_at IS NULL
          ${teamIds === 'all' ? '' : teamIds.length ? 'AND rf.team_id IN (:teamIds)' : 'AND FALSE'}
        ORDER BY d.id DESC LIMIT 200`,
      { replacements: { teamIds: teamIds === 'all' ? [] : teamIds }, type: QueryTypes.SELECT },
    );
    const out: DeletionRequestDto[] = [];
    for (const { id } of rows) {
      const r = await DeletionRequest.findByPk(id);
      if (r) out.push(await toDto(r));
    }
    return out;
  });
}
