// The audit trail (C13): who did what, when, to what, from where, and whether it was allowed.
// Rows are only ever inserted. A failure to write the trail is logged, never shown to the user.
import { QueryTypes, type Transaction } from 'sequelize';
import { getDb } from '@/lib/db';
import { log } from '@/lib/log';
import { AuditEvent } from '@/models';

export const AUDIT_ACTIONS = [
  'auth.sign_in',
  'auth.sign_in_failed',
  'auth.sign_out',
  'auth.password_reset_requested',
  'auth.password_reset',
  'auth.password_changed',
  'auth.access_refused',
  'auth.session_rejected',
  'invitation.created',
  'invitation.accepted',
  'invitation.revoked',
  'user.created',
  'user.updated',
  'user.deactivated',
  'team.created',
  'team.updated',
  'membership.added',
  'membership.changed',
  'membership.removed',
  'facility_role.granted',
  'facility_role.revoked',
  'campaign.created',
  'campaign.updated',
  'shift.opened',
  'shift.closed',
  'shift.log_added',
  'file.uploaded',
  'file.duplicate_linked',
  'file.quarantined',
  'file.released',
  'file.replaced',
  'calibration.created',
  'calibration.approved',
  'settings.created',
  'settings.approved',
  'reduction.requested',
  'reduction.batch_requested',
  'reduction.completed',
  'reduction.failed',
  'scan.flagged',
  'file.archived',
  'file.restored',
  'file.retention_set',
  'file.fixity_checked',
  'file.deletion_requested',
  'file.deleted',
  'export.created',
  // campaign comparison (issue 13)
  'comparison.saved',
  'comparison.deleted',
  // campaign citation metadata and records (C10, issue 14)
  'citation.updated',
  'citation.record_downloaded',
  // retention, embargo, legal hold and the two-step deletion (C10, issue 14)
  'campaign.retention_set',
  'file.deletion_confirmed',
  'file.deletion_cancelled',
  'file.deletion_refused',
  // public landing pages of campaigns (C10, issue 14)
  'campaign.landing_published',
  'campaign.landing_withdrawn',
  // archive, restore and scheduled fixity checks (C10/C11, issue 14); file.archived, file.restored and
  // file.fixity_checked (a flagged file matching again) are above
  'file.archive_requested',
  'file.archive_failed',
  'file.restore_requested',
  'file.restore_failed',
  'file.fixity_failed',
  'fixity.run_requested',
] as const;
export type AuditAction = (typeof AUDIT_ACTIONS)[number];

export interface AuditEntry {
  action: AuditAction;
  actorId?: number | null;
  actorEmail?: string | null;
  teamId?: number | null;
  targetType?: string | null;
  targetId?: string | number | null;
  ip?: string | null;
  outcome?: 'ok' | 'refused' | 'failed';
  details?: Record<string, unknown> | null;
  /** The campaign the event belongs to, when the caller knows it (otherwise found from the target; see below). */
  campaignId?: number | null;
}

const SHA256_HEX = /^[0-9a-f]{64}$/i;

/** Campaign of a target that lives inside one (a scan, shift, upload or raw file), from the database. */
const CAMPAIGN_OF_TARGET: Record<string, string> = {
  scan: 'SELECT campaign_id AS c FROM scans WHERE id = :id',
  shift: 'SELECT campaign_id AS c FROM shifts WHERE id = :id',
  upload: 'SELECT s.campaign_id AS c FROM uploads u JOIN shifts s ON s.id = u.shift_id WHERE u.id = :id',
  raw_file: 'SELECT MIN(campaign_id) AS c FROM scans WHERE raw_file_id = :id',
};

/** SHA-256 of the raw file a target is or reads (a scan's events, e.g. its reductions, carry its file's checksum). */
const SHA256_OF_TARGET: Record<string, string> = {
  raw_file: 'SELECT sha256 AS h FROM raw_files WHERE id = :id',
  scan: 'SELECT f.sha256 AS h FROM scans s JOIN raw_files f ON f.id = s.raw_file_id WHERE s.id = :id',
};

/**
 * The campaign and object checksum an event is searched by (audit_events.campaign_id / sha256): from the entry,
 * its details (`campaignId`, `sha256`) or its target. A failed lookup leaves them empty and never fails the change.
 */
async function searchKeys(
  entry: AuditEntry,
  transaction: Transaction | undefined,
): Promise<{ campaignId: number | null; sha256: string | null }> {
  const d = entry.details ?? {};
  let campaignId =
    entry.campaignId ??
    (Number.isInteger(d.campaignId) ? (d.campaignId as number) : null) ??
    (entry.targetType === 'campaign' && /^\d+$/.test(String(entry.targetId ?? '')) ? Number(entry.targetId) : null);
  let sha256 = typeof d.sha256 === 'string' && SHA256_HEX.test(d.sha256) ? d.sha256.toLowerCase() : null;
  const id = Number(entry.targetId);
  if (!entry.targetType || !Number.isInteger(id)) return { campaignId, sha256 };
  try {
    const sql = CAMPAIGN_OF_TARGET[entry.targetType];
    if (campaignId === null && sql) {
      const rows = await getDb().query<{ c: number | null }>(sql, {
        replacements: { id },
        type: QueryTypes.SELECT,
        transaction,
      });
      campaignId = rows[0]?.c ?? null;
    }
    const shaSql = SHA256_OF_TARGET[entry.targetType];
    if (sha256 === null && shaSql) {
      const rows = await getDb().query<{ h: string }>(shaSql, {
        replacements: { id },
        type: QueryTypes.SELECT,
        transaction,
      });
      sha256 = rows[0]?.h ?? null;
    }
  } catch (err) {
    log.warn('audit search keys not found', { err, action: entry.action });
  }
  return { campaignId, sha256 };
}

/** Writes one audit event. Pass `transaction` to make it part of the change it records. */
export async function recordAudit(entry: AuditEntry, options: { transaction?: Transaction } = {}): Promise<void> {
  try {
    getDb();
    const keys = await searchKeys(entry, options.transaction);
    await AuditEvent.create(
      {
        at: new Date(),
        action: entry.action,
        actor_id: entry.actorId ?? null,
        actor_email: entry.actorEmail ?? null,
        team_id: entry.teamId ?? null,
        target_type: entry.targetType ?? null,
        target_id: entry.targetId == null ? null : String(entry.targetId),
        ip: entry.ip ?? null,
        outcome: entry.outcome ?? 'ok',
        details: entry.details ?? null,
        campaign_id: keys.campaignId,
        sha256: keys.sha256,
      },
      { transaction: options.transaction },
    );
  } catch (err) {
    if (options.transaction) throw err;
    log.error('audit write failed', { err, action: entry.action });
  }
}
