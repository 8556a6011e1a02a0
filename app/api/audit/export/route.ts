// GET /api/audit/export?format=csv|json&from=YYYY-MM-DD&to=YYYY-MM-DD: the audit events of a range of UTC days
// (both ends included), oldest first, as a download, for the same readers as the audit page. At most
// EXPORT_LIMIT events per file; a longer range answers 400 asking for a shorter one, so no file is silently cut.
import { z } from 'zod';
import { apiRoute, idParam } from '@/lib/api/route';
import { type AuditEventDto, listAuditEvents } from '@/lib/db/queries/accounts';
import { AppError } from '@/lib/errors';
import { auditSearchFields, auditTeamScope, forReader, kindActions } from '../scope';

export const dynamic = 'force-dynamic';

const EXPORT_LIMIT = 20_000;
const DAY_MS = 86_400_000;

const day = z
  .string()
  .regex(/^\d{4}-\d{2}-\d{2}$/, 'Enter a day as YYYY-MM-DD, e.g. 2026-12-01.')
  .refine((s) => !Number.isNaN(Date.parse(`${s}T00:00:00Z`)), 'Enter a day that exists in the calendar.');

const query = z
  .object({
    format: z.enum(['csv', 'json'], { message: 'Choose CSV or JSON.' }),
    from: day,
    to: day,
    teamId: idParam.optional(),
    action: z
      .string()
      .trim()
      .max(64)
      .regex(/^[a-z_.]*$/, 'Choose a kind of event from the list.')
      .optional(),
    actor: z.string().trim().max(254).optional(),
    ...auditSearchFields,
  })
  .refine((q) => q.from <= q.to, { message: 'The first day must not be after the last day.', path: ['to'] });

/** One CSV field (RFC 4180: quoted when it holds a comma, quote or line break; quotes doubled). */
function csvField(v: string): string {
  // A leading = + - @ would be read as a formula by spreadsheet programs (common practice to neutralise it).
  const safe = /^[=+\-@]/.test(v) ? `'${v}` : v;
  return /[",\r\n]/.test(safe) ? `"${safe.replace(/"/g, '""')}"` : safe;
}

function detailsText(e: AuditEventDto): string {
  if (!e.details) return '';
  return Object.entries(e.details)
    .filter(([, v]) => v !== null && v !== undefined)
    .map(([k, v]) => `${k}=${e.labels.details[k] ?? (typeof v === 'object' ? JSON.stringify(v) : String(v))}`)
    .join('; ');
}

export const GET = apiRoute({ query }, async ({ actor, query: q }) => {
  const teamIds = auditTeamScope(actor, q.teamId);
  const from = new Date(`${q.from}T00:00:00Z`);
  const before = new Date(Date.parse(`${q.to}T00:00:00Z`) + DAY_MS);
  const { events: all, total } = await listAuditEvents({
    teamIds,
    teamId: q.teamId,
    action: q.action,
    actions: kindActions(q.kind),
    actor: q.actor,
    campaignId: q.campaignId,
    object: q.object,
    from,
    before,
    page: 1,
    pageSize: EXPORT_LIMIT,
  });
  if (total > EXPORT_LIMIT) {
    throw new AppError('bad_request:audit', {
      message: `These days hold ${total} events; one file takes at most ${EXPORT_LIMIT}. Choose fewer days.`,
    });
  }
  const events = forReader(actor, all).reverse(); // oldest first in a file
  const name = `lobeline-audit-${q.from}-to-${q.to}.${q.format}`;
  const headers = {
    'content-disposition': `attachment; filename="${name}"`,
    'cache-control': 'no-store',
  };
  if (q.format === 'json') {
    return new Response(
      JSON.stringify({ from: q.from, to: q.to, scope: teamIds === 'all' ? 'all' : 'teams', events }, null, 2),
      { headers: { ...headers, 'content-type': 'application/json; charset=utf-8' } },
    );
  }
  const lines = ['at_utc,action,who,team,campaign,object,sha256,outcome,details'];
  for (const e of events) {
    const object = e.labels.target ?? (e.targetType ? `${e.targetType} ${e.targetId ?? ''}`.trim() : '');
    lines.push(
      [
        e.at,
        e.action,
        e.actorEmail ?? '',
        e.teamName ?? '',
        e.campaignName ?? '',
        object,
        e.sha256 ?? '',
        e.outcome,
        detailsText(e),
      ]
        .map(csvField)
        .join(','),
    );
  }
  return new Response(`${lines.join('\r\n')}\r\n`, {
    headers: { ...headers, 'content-type': 'text/csv; charset=utf-8' },
  });
});
