// Kinds of audit events a PI or data steward searches by (C13): "who uploaded, calibrated, re-reduced, approved,
// archived, restored, asked for or confirmed a deletion". Each kind is a fixed list of lib/audit.ts actions, so the
// server filters with an exact IN list. Pure data: the audit page's filter reads it too.
import type { AuditAction } from './audit';

export const AUDIT_KINDS = {
  uploaded: {
    label: 'Uploaded',
    actions: ['file.uploaded', 'file.duplicate_linked', 'file.replaced', 'file.quarantined', 'file.released'],
  },
  calibrated: {
    label: 'Calibrated (new calibration or settings version)',
    actions: ['calibration.created', 'settings.created'],
  },
  approved: { label: 'Approved', actions: ['calibration.approved', 'settings.approved'] },
  reduced: {
    label: 'Reduced or re-reduced',
    actions: ['reduction.requested', 'reduction.batch_requested', 'reduction.completed', 'reduction.failed'],
  },
  archived: { label: 'Archived', actions: ['file.archived'] },
  restored: { label: 'Restored', actions: ['file.restored'] },
  fixity: { label: 'Fixity checked', actions: ['file.fixity_checked'] },
  deletion_requested: { label: 'Deletion asked for', actions: ['file.deletion_requested'] },
  deletion_confirmed: {
    label: 'Deletion confirmed or file deleted',
    actions: ['file.deletion_confirmed', 'file.deleted'],
  },
  deletion_stopped: {
    label: 'Deletion withdrawn or refused',
    actions: ['file.deletion_cancelled', 'file.deletion_refused'],
  },
  retention: {
    label: 'Retention, embargo or legal hold set',
    actions: ['file.retention_set', 'campaign.retention_set'],
  },
  citation: {
    label: 'Citation and public page',
    actions: [
      'citation.updated',
      'citation.record_downloaded',
      'campaign.landing_published',
      'campaign.landing_withdrawn',
    ],
  },
  access: {
    label: 'Sign-in and access',
    actions: [
      'auth.sign_in',
      'auth.sign_in_failed',
      'auth.sign_out',
      'auth.password_reset_requested',
      'auth.password_reset',
      'auth.password_changed',
      'auth.access_refused',
      'auth.session_rejected',
    ],
  },
} as const satisfies Record<string, { label: string; actions: readonly AuditAction[] }>;

export type AuditKind = keyof typeof AUDIT_KINDS;
export const AUDIT_KIND_NAMES = Object.keys(AUDIT_KINDS) as [AuditKind, ...AuditKind[]];

/**
 * Detail keys that carry a result of a reduction (today: the fitted angular offset of `reduction.completed`). They
 * are shown only to readers who may see the team's results (lib/policy.ts 'result.view'); a data steward or an
 * administrator reads that a reduction finished, never what it found.
 */
export const RESULT_DETAIL_KEYS: readonly string[] = ['offsetDeg'];

export function withoutResults<T extends { details: Record<string, unknown> | null }>(event: T): T {
  if (!event.details) return event;
  const kept = Object.entries(event.details).filter(([k]) => !RESULT_DETAIL_KEYS.includes(k));
  if (kept.length === Object.keys(event.details).length) return event;
  return { ...event, details: Object.fromEntries(kept) };
}
