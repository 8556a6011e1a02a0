// GET /api/audit: the audit trail (C13), newest first, paged on the server.
// Administrators and data stewards read every event; a PI reads the events of the teams they lead.
import { z } from 'zod';
import { apiRoute, idParam } from '@/lib/api/route';
import { listAuditEvents } from '@/lib/db/queries/accounts';
import { AppError } from '@/lib/errors';
import { authorize, can, teamsWhere } from '@/lib/policy';

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
  outcome: z.enum(['ok', 'refused', 'failed']).optional(),
  page: z.coerce.number().int().min(1).max(100_000).default(1),
  pageSize: z.coerce.number().int().min(5).max(200).default(50),
});

export const GET = apiRoute({ query }, async ({ actor, query }) => {
  const all = can(actor, 'audit.view.all') || can(actor, 'admin.audit');
  let teamIds: number[] | 'all';
  if (all) teamIds = 'all';
  else {
    teamIds = teamsWhere(actor, 'audit.view');
    if (teamIds.length === 0) {
      throw new AppError('forbidden:audit', {
        message: 'The audit trail is open to PIs (for their teams), data stewards and administrators.',
        context: { action: 'audit.view' },
      });
    }
    if (query.teamId) authorize(actor, 'audit.view', { teamId: query.teamId });
  }
  const { events, total } = await listAuditEvents({ ...query, teamIds });
  return { events, total, page: query.page, pageSize: query.pageSize, scope: all ? 'all' : 'teams' };
});
