// Who reads which audit events (C13), shared by GET /api/audit and GET /api/audit/export: administrators and data
// stewards every event, a PI the events of the teams they lead (lib/policy.ts 'audit.view'). An event never shows a
// result to a reader who may not see the team's results ('result.view'): lib/audit-kinds.ts withoutResults.
import { z } from 'zod';
import { idParam } from '@/lib/api/route';
import { AUDIT_KIND_NAMES, AUDIT_KINDS, withoutResults } from '@/lib/audit-kinds';
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

/** The events as this reader may see them: result values left out where the reader may not see results. */
export function forReader<T extends { teamId: number | null; details: Record<string, unknown> | null }>(
  actor: Actor,
  events: T[],
): T[] {
  return events.map((e) =>
    e.teamId != null && can(actor, 'result.view', { teamId: e.teamId }) ? e : withoutResults(e),
  );
}

/** The search filters both audit routes take (zod): kind of event, campaign, object or checksum text. */
export const auditSearchFields = {
  kind: z.enum(AUDIT_KIND_NAMES, { message: 'Choose a kind of event from the list.' }).optional(),
  campaignId: idParam.optional(),
  object: z
    .string()
    .trim()
    .max(128, 'Search for at most 128 characters: a SHA-256 or part of a file name.')
    .optional()
    .transform((v) => (v ? v : undefined)),
};

export function kindActions(kind: keyof typeof AUDIT_KINDS | undefined): readonly string[] | undefined {
  return kind ? AUDIT_KINDS[kind].actions : undefined;
}
