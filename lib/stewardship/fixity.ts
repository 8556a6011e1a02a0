// Fixity checks (C10/C11, issue 14): re-hash stored objects (online and archived) and compare with the SHA-256
// recorded when each file was catalogued. A rolling plan: each run takes the least-recently-checked files (never
// checked first), as many as make every stored file come round within LOBELINE_FIXITY_PERIOD_DAYS when a run happens
// every LOBELINE_FIXITY_EVERY: batch = ⌈files × every / period⌉. A mismatch or a missing object flags the file, is
// audited and is e-mailed to the data stewards (the `fixity_alert` notice); a flagged file that matches again is
// unflagged (and that is audited too). Files being archived or restored are left for the next run.
import { QueryTypes } from 'sequelize';
import { recordAudit } from '@/lib/audit';
import { getDb } from '@/lib/db';
import { getEnv } from '@/lib/env';
import { isAppError } from '@/lib/errors';
import { hashObjectRanged } from '@/lib/ingest/verify';
import { log } from '@/lib/log';
import { wantsNotice } from '@/lib/mail/preferences';
import { sendMail } from '@/lib/mail/transport';
import { type FacilityRole, PERMISSIONS_BY_FACILITY_ROLE } from '@/lib/policy';
import { FacilityRoleGrant, FixityCheck, RawFile, User } from '@/models';
import { currentPlace } from './archive';
import { fixityBatchSize } from './fixity-plan';

const flog = log.child({ surface: 'fixity' });

export { fixityBatchSize } from './fixity-plan';

export type FixityOutcome = 'match' | 'mismatch' | 'missing';

export interface FixityFinding {
  rawFileId: number;
  fileName: string;
  teamId: number;
  outcome: FixityOutcome;
  expected: string;
  found: string | null;
  bucket: string;
  key: string;
  message: string | null;
}

/** Re-hashes one file where it is now and records the check (row, file columns, audit on a change of verdict). */
export async function checkFileFixity(
  rawFileId: number,
  triggeredBy: number | null = null,
): Promise<FixityFinding | null> {
  getDb(); // the models are initialised with the connection
  const f = await RawFile.findByPk(rawFileId);
  if (!f || f.deleted_at || f.archive_state === 'archiving' || f.archive_state === 'restoring') return null;
  const place = currentPlace(f);
  const expectedBytes = Number(f.size_bytes);
  let outcome: FixityOutcome;
  let found: string | null = null;
  let message: string | null = null;
  try {
    const got = await hashObjectRanged(place.bucket, place.key);
    found = got.sha256;
    outcome = got.sha256 === f.sha256 && got.bytes === expectedBytes ? 'match' : 'mismatch';
    if (outcome === 'mismatch') {
      message =
        got.bytes === expectedBytes
          ? 'The stored bytes differ from the ones catalogued.'
          : `The stored object has ${got.bytes} bytes; ${expectedBytes} were catalogued.`;
    }
  } catch (err) {
    if (!(isAppError(err) && err.code === 'not_found:storage')) throw err;
    outcome = 'missing';
    message = `No object at ${place.bucket}/${place.key}.`;
  }
  const now = new Date();
  const wasFlagged = f.fixity_flagged_at !== null;
  const recorded = await getDb().transaction(async (transaction) => {
    // An archive or restore that started while we read has moved (or is moving) the bytes: what we read is not a
    // verdict on the file. Leave it for the next run.
    const current = await RawFile.findByPk(f.id, { transaction, lock: transaction.LOCK.UPDATE });
    if (!current || current.deleted_at || current.archive_state !== f.archive_state) return false;
    await FixityCheck.create(
      {
        raw_file_id: f.id,
        checked_at: now,
        ok: outcome === 'match',
        sha256_found: found,
        sha256_expected: f.sha256,
        outcome,
        bucket: place.bucket,
        object_key: place.key,
        triggered_by: triggeredBy,
        message,
      },
      { transaction },
    );
    await RawFile.update(
      {
        last_fixity_at: now,
        last_fixity_ok: outcome === 'match',
        fixity_flagged_at: outcome === 'match' ? null : (f.fixity_flagged_at ?? now),
      },
      { where: { id: f.id }, transaction, silent: true },
    );
    if (outcome !== 'match' || wasFlagged) {
      await recordAudit(
        {
          action: outcome === 'match' ? 'file.fixity_checked' : 'file.fixity_failed',
          actorId: triggeredBy,
          teamId: f.team_id,
          targetType: 'raw_file',
          targetId: f.id,
          outcome: outcome === 'match' ? 'ok' : 'failed',
          details: {
            sha256: f.sha256,
            found,
            outcome,
            bucket: place.bucket,
            key: place.key,
            ...(outcome === 'match' ? { note: 'matches again after an earlier failure; flag cleared' } : {}),
          },
        },
        { transaction },
      );
    }
    return true;
  });
  if (!recorded) return null;
  return {
    rawFileId: f.id,
    fileName: f.original_name,
    teamId: f.team_id,
    outcome,
    expected: f.sha256,
    found,
    bucket: place.bucket,
    key: place.key,
    message,
  };
}

/** The least-recently-checked stored files (never checked first), `limit` of them. */
export async function fixityCandidates(limit: number): Promise<number[]> {
  if (limit <= 0) return [];
  const rows = await getDb().query<{ id: number }>(
    `SELECT id FROM raw_files
      WHERE deleted_at IS NULL AND archive_state IN ('online', 'archived')
      ORDER BY last_fixity_at IS NOT NULL, last_fixity_at, id
      LIMIT :limit`,
    { replacements: { limit }, type: QueryTypes.SELECT },
  );
  return rows.map((r) => r.id);
}

export async function storedFileCount(): Promise<number> {
  const rows = await getDb().query<{ n: number | string }>(
    "SELECT COUNT(*) AS n FROM raw_files WHERE deleted_at IS NULL AND archive_state IN ('online', 'archived')",
    { type: QueryTypes.SELECT },
  );
  return Number(rows[0]?.n ?? 0);
}

/** Addresses of the active users whose facility role may run fixity checks and who want fixity alerts. */
export async function fixityAlertRecipients(): Promise<string[]> {
  getDb();
  const roles = (Object.keys(PERMISSIONS_BY_FACILITY_ROLE) as FacilityRole[]).filter((r) =>
    PERMISSIONS_BY_FACILITY_ROLE[r].has('fixity.run'),
  );
  const grants = await FacilityRoleGrant.findAll({ where: { role: roles }, attributes: ['user_id'] });
  const users = await User.findAll({
    where: { id: grants.map((g) => g.user_id) },
    attributes: ['email', 'is_active', 'notification_prefs'],
  });
  return [
    ...new Set(
      users.filter((u) => u.is_active && wantsNotice(u.notification_prefs, 'fixity_alert')).map((u) => u.email),
    ),
  ].sort();
}

/** One e-mail per run listing every failure; a mail problem is logged (the failures are recorded already). */
export async function sendFixityAlert(failures: FixityFinding[]): Promise<{ sent: number }> {
  if (failures.length === 0) return { sent: 0 };
  try {
    const to = await fixityAlertRecipients();
    if (to.length === 0) return { sent: 0 };
    const origin = getEnv().APP_ORIGIN;
    const n = failures.length;
    const lines = failures.flatMap((f) => [
      `- ${f.fileName} (file ${f.rawFileId}): ${f.outcome === 'missing' ? 'MISSING' : 'CHECKSUM MISMATCH'}`,
      `  where:    ${f.bucket}/${f.key}`,
      `  expected: ${f.expected}`,
      `  found:    ${f.found ?? '(no object)'}`,
    ]);
    const text = [
      `A fixity check found ${n} stored raw file${n === 1 ? '' : 's'} that no longer match${n === 1 ? 'es' : ''} the SHA-256 recorded when ${n === 1 ? 'it was' : 'they were'} catalogued:`,
      '',
      ...lines,
      '',
      `Fixity report: ${origin}/stewardship/fixity`,
      '',
      'The files are flagged in the file register. Nothing was changed or removed. Restore the bytes from another',
      'copy (the lab’s backup, the archive) and run the check again; a file that matches again is unflagged.',
      'You get this e-mail as a data steward; turn it off in your notification settings.',
    ].join('\n');
    await sendMail({ to, subject: `Lobeline: fixity check failed for ${n} stored file${n === 1 ? '' : 's'}`, text });
    return { sent: to.length };
  } catch (err) {
    flog.error('fixity alert e-mail not sent', { err, failures: failures.length });
    return { sent: 0 };
  }
}

export interface FixityRunSummary {
  checked: number;
  matched: number;
  failures: FixityFinding[];
  batch: number;
  total: number;
  alertsSent: number;
}

/**
 * One run of the rolling plan: the batch size from the schedule (or `limit`), re-hashed one after the other; or
 * the files `rawFileIds` (a steward re-checking chosen files, e.g. after putting back a good copy).
 * A storage or database failure on one file is logged and that file is left for the next run.
 */
export async function runFixityBatch(
  options: { limit?: number; rawFileIds?: number[]; triggeredBy?: number | null } = {},
): Promise<FixityRunSummary> {
  const env = getEnv();
  const total = await storedFileCount();
  const batch =
    options.rawFileIds?.length ??
    options.limit ??
    fixityBatchSize(total, env.LOBELINE_FIXITY_EVERY, env.LOBELINE_FIXITY_PERIOD_DAYS);
  const ids = options.rawFileIds?.length ? options.rawFileIds : await fixityCandidates(batch);
  const failures: FixityFinding[] = [];
  let matched = 0;
  let checked = 0;
  for (const id of ids) {
    try {
      const r = await checkFileFixity(id, options.triggeredBy ?? null);
      if (!r) continue;
      checked += 1;
      if (r.outcome === 'match') matched += 1;
      else failures.push(r);
    } catch (err) {
      flog.warn('fixity check of one file failed; left for the next run', { rawFileId: id, err });
    }
  }
  const { sent } = await sendFixityAlert(failures);
  flog.info('fixity run', { checked, matched, failed: failures.length, batch, total });
  return { checked, matched, failures, batch, total, alertsSent: sent };
}
