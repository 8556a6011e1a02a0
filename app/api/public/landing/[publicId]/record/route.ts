// GET /api/public/landing/[publicId]/record?format=datacite-xml|datacite-json|schema-org: the citation record of a
// campaign whose public landing page is published, for anyone, signed in or not (lib/policy.ts 'landing.read').
// The record carries only what the embargo allows (lib/citation/records.ts). An unpublished or unknown page is 404.
import { z } from 'zod';
import { apiRoute } from '@/lib/api/route';
import { dataciteJson, dataciteXml, datasetJsonLd, missingForDataCite } from '@/lib/citation/records';
import { getCitationContext } from '@/lib/db/queries/citations';
import { getPublicLanding } from '@/lib/db/queries/landing';
import { getEnv } from '@/lib/env';
import { AppError } from '@/lib/errors';
import { authorizePublic } from '@/lib/policy';

export const dynamic = 'force-dynamic';

const FORMATS = {
  'datacite-xml': { type: 'application/xml; charset=utf-8', ext: 'datacite.xml' },
  'datacite-json': { type: 'application/vnd.datacite.datacite+json; charset=utf-8', ext: 'datacite.json' },
  'schema-org': { type: 'application/ld+json; charset=utf-8', ext: 'jsonld' },
} as const;

const params = z.object({ publicId: z.string().regex(/^[a-z0-9]{12}$/, 'This is not the address of a public page.') });
const query = z.object({
  format: z.enum(['datacite-xml', 'datacite-json', 'schema-org'], 'Choose datacite-xml, datacite-json or schema-org.'),
});

export const GET = apiRoute({ auth: false, params, query }, async ({ params, query }) => {
  const landing = await getPublicLanding({ publicId: params.publicId });
  authorizePublic('landing.read', landing?.subject ?? null);
  const ctx = await getCitationContext({ campaignId: landing!.campaignId, origin: getEnv().APP_ORIGIN });
  if (query.format !== 'schema-org') {
    const missing = missingForDataCite(ctx);
    if (missing.length > 0) {
      throw new AppError('conflict:campaign', {
        message: `This dataset has no DataCite record yet: it still needs ${missing.join(', ')}.`,
        details: missing.map((m) => `${m}: missing.`),
      });
    }
  }
  const text =
    query.format === 'datacite-xml'
      ? dataciteXml(ctx)
      : `${JSON.stringify(query.format === 'datacite-json' ? dataciteJson(ctx) : datasetJsonLd(ctx), null, 2)}\n`;
  return new Response(text, {
    status: 200,
    headers: {
      'content-type': FORMATS[query.format].type,
      'content-disposition': `attachment; filename="dataset-${params.publicId}.${FORMATS[query.format].ext}"`,
      'cache-control': 'no-store',
    },
  });
});
