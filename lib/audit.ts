// The audit trail (C13): who did what, when, to what, from where, and whether it was allowed.
// Rows are only ever inserted. A failure to write the trail is logged, never shown to the user.
import type { Transaction } from 'sequelize';
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
}

/** Writes one audit event. Pass `transaction` to make it part of the change it records. */
export async function recordAudit(entry: AuditEntry, options: { transaction?: Transaction } = {}): Promise<void> {
  try {
    getDb();
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
      },
      { transaction: options.transaction },
    );
  } catch (err) {
    if (options.transaction) throw err;
    log.error('audit write failed', { err, action: entry.action });
  }
}
