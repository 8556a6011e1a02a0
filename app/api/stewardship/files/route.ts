// GET /api/stewardship/files: the data steward's register of every stored raw file of every team (C10), filtered,
// sorted and paged on the server. Catalogue metadata only (lib/policy.ts 'rawfile.metadata'): no results, images
// or maps. `scopes=1` adds the teams and campaigns for the filter menus.
import { z } from 'zod';
import { apiRoute, idParam } from '@/lib/api/route';
import { listRegister, listRegisterScopes, REGISTER_SORTS } from '@/lib/db/queries/file-register';
import { authorize } from '@/lib/policy';

export const dynamic = 'force-dynamic';

const query = z.object({
  teamId: idParam.optional(),
  campaignId: idParam.optional(),
  q: z.string().trim().max(120, 'Search with at most 120 characters.').optional(),
  completeness: z.enum(['complete', 'incomplete']).optional(),
  embargo: z.enum(['embargoed', 'open']).optional(),
  archive: z.enum(['online', 'live', 'archived', 'moving']).optional(),
  fixity: z.enum(['flagged']).optional(),
  hold: z.enum(['held', 'deletion']).optional(),
  sort: z.enum(REGISTER_SORTS).default('stored'),
  dir: z.enum(['asc', 'desc']).default('desc'),
  page: z.coerce.number().int().min(1).max(100_000).default(1),
  pageSize: z.coerce.number().int().min(5).max(100).default(25),
  scopes: z.enum(['0', '1']).optional(),
});

export const GET = apiRoute({ query }, async ({ actor, query }) => {
  authorize(actor, 'rawfile.metadata', { surface: 'api' });
  const { scopes, q, ...rest } = query;
  const [page, lists] = await Promise.all([
    listRegister({ ...rest, q: q || undefined }),
    scopes === '1' ? listRegisterScopes() : Promise.resolve(undefined),
  ]);
  return { ...page, page: query.page, pageSize: query.pageSize, sort: query.sort, dir: query.dir, ...(lists ?? {}) };
});
