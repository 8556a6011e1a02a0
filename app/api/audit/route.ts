// GET /api/audit: the audit trail (C13), newest first, paged on the server.
// Administrators and data stewards read every event; a PI reads the events of the teams they lead. Filters: team,
// kind of event (lib/audit-kinds.ts) or action prefix, who (part of an e-mail), outcome, campaign, object (a SHA-256
// or its first 6+ hex digits, or part of a raw file's name) and UTC days.
import { z } from 'zod';
import { apiRoute, idParam } from '@/lib/api/route';
import { listAuditEvents } from '@/lib/db/queries/accounts';
import { auditSearchFields, auditTeamScope, forReader, kindActions } from './scope';

export const dynamic = 'force-dynamic';

const query = z.object({
  teamId: idParam.optional(),
  action: z
    .string()
    .trim()
    .max(64)
    .regex(/^[a-z_.]*$/, 'use the action name, e.g. "auth." or "membership.changed"')
    .optional(),
  actor: z.string().trim().max(254).optional(),
  ...auditSearchFields,
  outcome: z.enum(['ok', 'refused', 'failed']).optional(),
  /** First and last UTC day (YYYY-MM-DD), both included. */
  from: z
    .string()
    .regex(/^\d{4}-\d{2}-\d{2}$/, 'Enter a day as YYYY-MM-DD.')
    .optional(),
  to: z
    .string()
    .regex(/^\d{4}-\d{2}-\d{2}$/, 'Enter a day as YYYY-MM-DD.')
    .optional(),
  page: z.coerce.number().int().min(1).max(100_000).default(1),
  pageSize: z.coerce.number().int().min(5).max(200).default(50),
});

export const GET = apiRoute({ query }, async ({ actor, query }) => {
  const teamIds = auditTeamScope(actor, query.teamId);
  const { from, to, kind, ...rest } = query;
  const { events, total } = await listAuditEvents({
    ...rest,
    actions: kindActions(kind),
    teamIds,
    from: from ? new Date(`${from}T00:00:00Z`) : undefined,
    before: to ? new Date(Date.parse(`${to}T00:00:00Z`) + 86_400_000) : undefined,
  });
  return {
    events: forReader(actor, events),
    total,
    page: query.page,
    pageSize: query.pageSize,
    scope: teamIds === 'all' ? 'all' : 'teams',
  };
});
