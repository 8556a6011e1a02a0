// GET /api/campaigns/[campaignId]/citation/record?format=datacite-xml|datacite-json|schema-org[&download=1]:
// the campaign's citation record (C10; lib/citation/records.ts, SCIENCE.md §11.3–§11.4), with only what the
// campaign's embargo allows. A DataCite record needs its mandatory properties: without them the answer is 409 with
// the missing ones named. Every download is audited (citation.record_downloaded).
import { z } from 'zod';
import { apiRoute } from '@/lib/api/route';
import { recordAudit } from '@/lib/audit';
import { dataciteJson, dataciteXml, datasetJsonLd, missingForDataCite } from '@/lib/citation/records';
import { getCitationContext } from '@/lib/db/queries/citations';
import { getEnv } from '@/lib/env';
import { AppError } from '@/lib/errors';
import { campaignFor, campaignParams } from '../../access';

export const dynamic = 'force-dynamic';

const FORMATS = {
  'datacite-xml': { type: 'application/xml; charset=utf-8', ext: 'datacite.xml' },
  'datacite-json': { type: 'application/vnd.datacite.datacite+json; charset=utf-8', ext: 'datacite.json' },
  'schema-org': { type: 'application/ld+json; charset=utf-8', ext: 'jsonld' },
} as const;

const query = z.object({
  format: z.enum(['datacite-xml', 'datacite-json', 'schema-org'], 'Choose datacite-xml, datacite-json or schema-org.'),
  download: z.enum(['0', '1']).optional(),
});

export const GET = apiRoute({ params: campaignParams, query }, async ({ actor, params, query, ip }) => {
  const teamId = await campaignFor(actor, params.campaignId, 'citation.view');
  const ctx = await getCitationContext({ campaignId: params.campaignId, origin: getEnv().APP_ORIGIN });
  if (query.format !== 'schema-org') {
    const missing = missingForDataCite(ctx);
    if (missing.length > 0) {
      throw new AppError('conflict:campaign', {
        message: `A DataCite record needs ${missing.join(', ')}. Add them to the citation metadata first.`,
        details: missing.map((m) => `${m}: missing.`),
      });
    }
  }
  const body =
    query.format === 'datacite-xml'
      ? dataciteXml(ctx)
      : `${JSON.stringify(query.format === 'datacite-json' ? dataciteJson(ctx) : datasetJsonLd(ctx), null, 2)}\n`;
  await recordAudit({
    action: 'citation.record_downloaded',
    actorId: actor.userId,
    actorEmail: actor.email,
    teamId,
    targetType: 'campaign',
    targetId: params.campaignId,
    ip,
    details: { format: query.format, doi: ctx.citation.doi },
  });
  const headers = new Headers({ 'content-type': FORMATS[query.format].type, 'cache-control': 'no-store' });
  if (query.download === '1') {
    headers.set(
      'content-disposition',
      `attachment; filename="campaign-${params.campaignId}.${FORMATS[query.format].ext}"`,
    );
  }
  return new Response(body, { status: 200, headers });
});
