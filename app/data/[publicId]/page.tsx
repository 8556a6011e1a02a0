import type { Metadata } from 'next';
import { notFound } from 'next/navigation';
import { Panel } from '@/components/ui/panel';
import { orcidUri } from '@/lib/citation/orcid';
import {
  type CitationContext,
  dataciteJson,
  datasetJsonLd,
  doiUri,
  missingForDataCite,
  recordTitle,
  spdxUri,
} from '@/lib/citation/records';
import { creatorDisplayName } from '@/lib/citation/schema';
import { getCitationContext } from '@/lib/db/queries/citations';
import { getPublicLanding, listPublicFiles } from '@/lib/db/queries/landing';
import { getEnv } from '@/lib/env';
import { isAppError } from '@/lib/errors';
import { formatBytes, formatDay } from '@/lib/format';
import { authorizePublic, canPublic, type PublicSubject } from '@/lib/policy';

export const dynamic = 'force-dynamic';

// A campaign's public landing page (C10, issue 14): what a citation needs, and the file list only when the embargo
// allows it. Never results, images or maps. Who may see it: lib/policy.ts 'landing.read' / 'landing.files'.

type Params = { params: Promise<{ publicId: string }> };

async function load(publicId: string): Promise<{ ctx: CitationContext; subject: PublicSubject }> {
  const landing = await getPublicLanding({ publicId });
  try {
    authorizePublic('landing.read', landing?.subject ?? null);
  } catch (err) {
    if (isAppError(err) && err.type === 'not_found') notFound();
    throw err;
  }
  const ctx = await getCitationContext({ campaignId: landing!.campaignId, origin: getEnv().APP_ORIGIN });
  return { ctx, subject: landing!.subject };
}

export async function generateMetadata({ params }: Params): Promise<Metadata> {
  const { publicId } = await params;
  const landing = await getPublicLanding({ publicId });
  if (!landing || !canPublic('landing.read', landing.subject)) return { title: 'Not found' };
  const ctx = await getCitationContext({ campaignId: landing.campaignId, origin: getEnv().APP_ORIGIN });
  // A published record is meant to be found: unlike the rest of the app, search engines may index it.
  return { title: recordTitle(ctx), robots: { index: true, follow: true } };
}

/** JSON inside a <script> element: `<` escaped so that no value can close the element. */
function scriptJson(value: unknown): string {
  return JSON.stringify(value).replace(/</g, '\\u003c');
}

function Term({ label, children }: { label: string; children: React.ReactNode }) {
  return (
    <div className="grid gap-1 py-2 sm:grid-cols-[10rem_1fr] sm:gap-4">
      <dt className="text-small font-medium text-ink-500">{label}</dt>
      <dd className="min-w-0 break-words text-body text-ink-900">{children}</dd>
    </div>
  );
}

const linkClass = 'font-medium text-lobe-700 underline decoration-lobe-300 underline-offset-2 hover:text-lobe-900';

function identifierHref(identifier: string, type: string): string | null {
  if (type === 'DOI') return doiUri(identifier);
  if (type === 'URL') return identifier;
  if (type === 'arXiv') return `https://arxiv.org/abs/${identifier.replace(/^arXiv:/i, '')}`;
  return null;
}

/**
 * A citation line: creators (year), title, publisher, version, then the DOI as a link or this page's address. The
 * order follows DataCite's recommended citation (Creator (PublicationYear): Title. Version. Publisher. Identifier)
 * [memory], with the version after the publisher.
 */
function citeAs(ctx: CitationContext): string {
  const c = ctx.citation;
  const parts = [
    `${c.creators.map(creatorDisplayName).join('; ')}${c.publicationYear !== null ? ` (${c.publicationYear})` : ''}`,
    recordTitle(ctx),
    c.publisher,
    c.version ? `Version ${c.version}` : null,
    c.doi ? doiUri(c.doi) : ctx.landingUrl,
  ].filter((p): p is string => !!p);
  return `${parts.join('. ')}.`;
}

/** "IsSupplementTo" → "is supplement to" (DataCite's controlled relation types, in words). */
const relationWords = (r: string) => r.replace(/([a-z])([A-Z])/g, '$1 $2').toLowerCase();

export default async function PublicDatasetPage({ params }: Params) {
  const { publicId } = await params;
  const { ctx, subject } = await load(publicId);
  const c = ctx.citation;
  const filesOpen = canPublic('landing.files', subject);
  const listing = filesOpen ? await listPublicFiles({ campaignId: ctx.campaign.id }) : null;
  const dataciteReady = missingForDataCite(ctx).length === 0;
  const jsonLd = datasetJsonLd(ctx);
  const recordHref = (format: string) => `/api/public/landing/${publicId}/record?format=${format}`;
  const title = recordTitle(ctx);

  return (
    <article className="space-y-6" data-testid="public-dataset">
      <script
        type="application/ld+json"
        data-testid="jsonld"
        // biome-ignore lint/security/noDangerouslySetInnerHtml: a JSON data block (never run), every < escaped by scriptJson; React would HTML-escape text children and break the JSON
        dangerouslySetInnerHTML={{ __html: scriptJson(jsonLd) }}
      />
      {dataciteReady ? (
        <script
          type="application/vnd.datacite.datacite+json"
          // biome-ignore lint/security/noDangerouslySetInnerHtml: a JSON data block (never run), every < escaped by scriptJson
          dangerouslySetInnerHTML={{ __html: scriptJson(dataciteJson(ctx)) }}
        />
      ) : null}

      <header>
        <p className="text-micro font-semibold uppercase tracking-wider text-lobe-700">Dataset</p>
        <h1 className="mt-1 text-title font-semibold tracking-tight text-ink-900">{title}</h1>
        <p className="mt-2 text-body text-ink-700">
          {c.creators.map(creatorDisplayName).join('; ')}
          {c.publicationYear !== null ? ` (${c.publicationYear})` : ''}
          {c.publisher ? `. ${c.publisher}` : ''}
          {c.version ? `. Version ${c.version}` : ''}
          {c.doi ? (
            <>
              {'. '}
              <a className={linkClass} href={doiUri(c.doi)}>
                {doiUri(c.doi)}
              </a>
            </>
          ) : (
            '. No DOI yet.'
          )}
        </p>
      </header>

      {c.description ? (
        <Panel title="Description">
          <p className="whitespace-pre-line text-body text-ink-800">{c.description}</p>
        </Panel>
      ) : null}

      <Panel title="Creators" data-testid="creators">
        <ul className="divide-y divide-ink-100">
          {c.creators.map((p) => (
            <li key={`${creatorDisplayName(p)}-${p.orcid ?? ''}`} className="py-2">
              <span className="font-medium text-ink-900">{creatorDisplayName(p)}</span>
              {p.orcid ? (
                <>
                  {' · ORCID '}
                  <a className={linkClass} href={orcidUri(p.orcid)}>
                    {p.orcid}
                  </a>
                </>
              ) : null}
              {p.affiliations.length ? (
                <span className="block text-small text-ink-600">
                  {p.affiliations.map((a, j) => (
                    <span key={a.name}>
                      {j > 0 ? '; ' : ''}
                      {a.rorId ? (
                        <a className={linkClass} href={a.rorId}>
                          {a.name}
                        </a>
                      ) : (
                        a.name
                      )}
                    </span>
                  ))}
                </span>
              ) : null}
            </li>
          ))}
        </ul>
      </Panel>

      <Panel title="About this dataset">
        <dl className="divide-y divide-ink-100">
          <Term label="Publisher">{c.publisher ?? '—'}</Term>
          <Term label="Publication year">{c.publicationYear ?? '—'}</Term>
          <Term label="Version">{c.version ?? '—'}</Term>
          <Term label="Licence">
            {c.licence ? (
              <a className={linkClass} href={spdxUri(c.licence)}>
                {c.licence}
              </a>
            ) : (
              'No licence stated. Ask the publisher before reusing the data.'
            )}
          </Term>
          <Term label="Keywords">{c.keywords.length ? c.keywords.join(', ') : '—'}</Term>
          <Term label="Funding">
            {c.funding.length ? (
              <ul>
                {c.funding.map((f) => (
                  <li key={`${f.funderName}-${f.awardNumber ?? ''}`}>
                    {f.funderName}
                    {f.awardNumber ? `, award ${f.awardNumber}` : ''}
                    {f.awardTitle ? ` (${f.awardTitle})` : ''}
                  </li>
                ))}
              </ul>
            ) : (
              '—'
            )}
          </Term>
          <Term label="Related">
            {c.relatedIdentifiers.length ? (
              <ul>
                {c.relatedIdentifiers.map((r) => {
                  const href = identifierHref(r.identifier, r.identifierType);
                  return (
                    <li key={`${r.relationType}-${r.identifier}`}>
                      <span className="text-ink-600">{relationWords(r.relationType)}</span>{' '}
                      {href ? (
                        <a className={linkClass} href={href}>
                          {r.identifier}
                        </a>
                      ) : (
                        r.identifier
                      )}{' '}
                      <span className="text-small text-ink-500">({r.identifierType})</span>
                    </li>
                  );
                })}
              </ul>
            ) : (
              '—'
            )}
          </Term>
        </dl>
      </Panel>

      <Panel title="Files" data-testid="files">
        {filesOpen && listing ? (
          listing.total === 0 ? (
            <p className="text-body text-ink-700">No files are listed for this dataset.</p>
          ) : (
            <>
              <p className="mb-3 text-small text-ink-600">
                {listing.total} file{listing.total === 1 ? '' : 's'}, HDF5. Each checksum is the SHA-256 of the file as
                stored: a copy you receive is intact when <code>sha256sum</code> gives the same value. The files are not
                downloaded from this page; ask the publisher for them.
              </p>
              <div className="overflow-x-auto">
                <table className="w-full text-left text-small" data-testid="file-list">
                  <thead className="text-ink-500">
                    <tr>
                      <th className="py-1.5 pr-4 font-medium">File</th>
                      <th className="py-1.5 pr-4 text-right font-medium">Size</th>
                      <th className="py-1.5 font-medium">SHA-256</th>
                    </tr>
                  </thead>
                  <tbody className="divide-y divide-ink-100">
                    {listing.files.map((f) => (
                      <tr key={f.sha256 + f.name}>
                        <td className="py-1.5 pr-4 break-all">{f.name}</td>
                        <td className="py-1.5 pr-4 text-right whitespace-nowrap tabular-nums">
                          {formatBytes(f.sizeBytes)}
                        </td>
                        <td className="py-1.5 font-mono text-micro break-all text-ink-700">{f.sha256}</td>
                      </tr>
                    ))}
                  </tbody>
                </table>
              </div>
              {listing.total > listing.files.length ? (
                <p className="mt-2 text-small text-ink-600">
                  The first {listing.files.length} of {listing.total} files are listed.
                </p>
              ) : null}
            </>
          )
        ) : (
          <p className="text-body text-ink-800" data-testid="embargo-notice">
            This dataset is under embargo until {formatDay(`${subject.embargoUntil}T00:00:00Z`)}. An embargo keeps the
            files closed for a set time, usually until the results are published. Until that day this page shows only
            who made the dataset and how to cite it; the list of files appears here on that day.
          </p>
        )}
      </Panel>

      <Panel title="Cite and reuse" data-testid="records">
        <p className="mb-1 text-small font-medium text-ink-800">Cite as</p>
        <p
          className="mb-3 rounded-md bg-ink-50 px-3 py-2 text-small text-ink-800 ring-1 ring-ink-100"
          data-testid="cite-as"
        >
          {citeAs(ctx)}
        </p>
        <p className="mb-3 text-small text-ink-600">
          The citation record of this dataset, in two open formats. The schema.org record is also embedded in this page
          for search engines.
        </p>
        <ul className="flex flex-wrap gap-2">
          <li>
            <a className={linkClass} href={recordHref('schema-org')} download>
              schema.org Dataset (JSON-LD)
            </a>
          </li>
          {dataciteReady ? (
            <>
              <li>
                <a className={linkClass} href={recordHref('datacite-xml')} download>
                  DataCite XML
                </a>
              </li>
              <li>
                <a className={linkClass} href={recordHref('datacite-json')} download>
                  DataCite JSON
                </a>
              </li>
            </>
          ) : (
            <li className="text-small text-ink-600">A DataCite record follows once the dataset has a DOI.</li>
          )}
        </ul>
      </Panel>
    </article>
  );
}
