// Who reads which audit events (C13), shared by GET /api/audit and GET /api/audit/export: administrators and data
// stewards every event, a PI the events of the teams they lead (lib/policy.ts 'audit.view').
import { AppError } from '@/lib/errors';
import { type Actor, authorize, can, teamsWhere } from '@/lib/policy';

export function auditTeamScope(actor: Actor, teamId?: number): number[] | 'all' {
  if (can(actor, 'audit.view.all') || can(actor, 'admin.audit')) return 'all';
  const teamIds = teamsWhere(actor, 'audit.view');
  if (teamIds.length === 0) {
    throw new AppError('forbidden:audit', {
      message: 'The audit trail is open to PIs (for their teams), data stewards and administrators.',
      context: { action: 'audit.view' },
    });
  }
  if (teamId) authorize(actor, 'audit.view', { teamId });
  return teamIds;
}
