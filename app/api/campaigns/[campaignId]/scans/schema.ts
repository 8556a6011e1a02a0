// Query of GET /api/campaigns/[campaignId]/scans (server paging, sorting and filtering).
import { z } from 'zod';
import { SCAN_STATUSES } from '@/models/files';

const SORTS = ['uploaded', 'started', 'title', 'target', 'status', 'offset', 'steps', 'id'] as const;

const statusList = z
  .union([z.string(), z.array(z.string())])
  .transform((v) => (Array.isArray(v) ? v : v.split(',')).map((s) => s.trim()).filter(Boolean))
  .pipe(z.array(z.enum(SCAN_STATUSES, `one of ${SCAN_STATUSES.join(', ')}`)).max(SCAN_STATUSES.length));

export const scanListQuery = z.object({
  page: z.coerce.number().int('a whole number').min(1, 'at least 1').max(100_000).default(1),
  pageSize: z.coerce.number().int('a whole number').min(1, 'at least 1').max(200, 'at most 200').default(25),
  sort: z.enum(SORTS, `one of ${SORTS.join(', ')}`).default('uploaded'),
  dir: z.enum(['asc', 'desc'], 'asc or desc').default('desc'),
  status: statusList.optional(),
  target: z.string().trim().min(1).max(32).optional(),
  shift: z.coerce.number().int().positive('a shift id').optional(),
  flagged: z
    .enum(['true', 'false'], 'true or false')
    .transform((v) => v === 'true')
    .optional(),
  q: z.string().trim().max(100, 'at most 100 characters').optional(),
});
export type ScanListQueryInput = z.infer<typeof scanListQuery>;
