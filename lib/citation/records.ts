// Citation records of a campaign (C10, issue 14): DataCite Metadata Schema 4.x as XML and as the JSON of DataCite's
// REST API attributes, and a schema.org Dataset as JSON-LD (SCIENCE.md §11.3–§11.4). Pure functions of the
// campaign, its citation metadata and its file summary; no server imports, so tests and the browser can use them.
//
// Embargo: while a campaign is under embargo (embargo_until later than today) a record still cites the dataset —
// who made it, what it is, its DOI — but says nothing about its files (no size, format or file count), states
// embargoed access and the day the data become available (DataCite date type "Available"; schema.org
// isAccessibleForFree false and conditionsOfAccess). After that day the file summary is included.
import type { Dataset, WithContext } from 'schema-dts';
import { orcidUri } from './orcid';
import { type CitationBody, type Creator, creatorDisplayName } from './schema';
import { DATACITE_NAMESPACE, DATACITE_SCHEMA_VERSION, DATACITE_XSD } from './vocabulary';

export interface CitationContext {
  campaign: {
    id: number;
    name: string;
    target: string;
    wavelengthNm: number;
    experimentKind: string;
    embargoUntil: string | null;
  };
  citation: CitationBody;
  files: { count: number; totalBytes: number };
  /** Today, YYYY-MM-DD (UTC), passed in so the result does not depend on the clock. */
  today: string;
  /** The campaign's page in Lobeline (schema.org url). */
  landingUrl: string;
}

export const RESOURCE_TYPE = 'Photoelectron momentum images';
export const HDF5_MEDIA_TYPE = 'application/x-hdf5'; // SCIENCE.md §11.4 example encodingFormat

export function underEmbargo(ctx: Pick<CitationContext, 'campaign' | 'today'>): boolean {
  return !!ctx.campaign.embargoUntil && ctx.campaign.embargoUntil > ctx.today;
}

export function recordTitle(ctx: CitationContext): string {
  return ctx.citation.title ?? ctx.campaign.name;
}

/** DataCite mandatory properties (SCIENCE.md §11.3) that the metadata does not provide yet. */
export function missingForDataCite(ctx: CitationContext): string[] {
  const c = ctx.citation;
  const out: string[] = [];
  if (!c.doi) out.push('DOI (Identifier)');
  if (c.creators.length === 0) out.push('at least one creator');
  if (!c.publisher) out.push('publisher');
  if (c.publicationYear === null) out.push('publication year');
  return out;
}

export const spdxUri = (id: string) => `https://spdx.org/licenses/${id}.html`;
export const doiUri = (doi: string) => `https://doi.org/${doi}`;

function subjects(ctx: CitationContext): string[] {
  return [...ctx.citation.keywords];
}

function describeFiles(ctx: CitationContext): string[] {
  if (underEmbargo(ctx)) return [];
  const mib = ctx.files.totalBytes / (1024 * 1024);
  return [`${ctx.files.count} file${ctx.files.count === 1 ? '' : 's'}`, `${mib.toFixed(1)} MiB`];
}

// DATACITE JSON //

/** The `attributes` object of DataCite's REST API (JSON), schema 4.x property names [memory of the API docs]. */
export function dataciteJson(ctx: CitationContext): Record<string, unknown> {
  const c = ctx.citation;
  const embargo = underEmbargo(ctx);
  const dates: { date: string; dateType: string; dateInformation?: string }[] = [];
  if (embargo && ctx.campaign.embargoUntil) {
    dates.push({ date: ctx.campaign.embargoUntil, dateType: 'Available', dateInformation: 'End of embargo' });
  }
  const rightsList: Record<string, string>[] = [];
  if (c.licence) {
    rightsList.push({
      rights: c.licence,
      rightsUri: spdxUri(c.licence),
      rightsIdentifier: c.licence,
      rightsIdentifierScheme: 'SPDX',
      schemeUri: 'https://spdx.org/licenses/',
    });
  }
  rightsList.push(
    embargo
      ? { rights: 'Embargoed access', rightsUri: 'info:eu-repo/semantics/embargoedAccess' }
      : { rights: 'Open access', rightsUri: 'info:eu-repo/semantics/openAccess' },
  );
  return {
    doi: c.doi,
    identifiers: c.doi ? [{ identifier: c.doi, identifierType: 'DOI' }] : [],
    creators: c.creators.map(dataciteCreatorJson),
    titles: [{ title: recordTitle(ctx), lang: 'en' }],
    publisher: { name: c.publisher },
    publicationYear: c.publicationYear === null ? null : String(c.publicationYear),
    types: { resourceTypeGeneral: 'Dataset', resourceType: RESOURCE_TYPE },
    subjects: subjects(ctx).map((subject) => ({ subject })),
    dates,
    language: 'en',
    relatedIdentifiers: c.relatedIdentifiers.map((r) => ({
      relatedIdentifier: r.identifier,
      relatedIdentifierType: r.identifierType,
      relationType: r.relationType,
    })),
    sizes: describeFiles(ctx),
    formats: embargo ? [] : [HDF5_MEDIA_TYPE],
    version: c.version,
    rightsList,
    descriptions: c.description ? [{ description: c.description, descriptionType: 'Abstract', lang: 'en' }] : [],
    fundingReferences: c.funding.map((f) => ({
      funderName: f.funderName,
      ...(f.funderIdentifier
        ? { funderIdentifier: f.funderIdentifier, funderIdentifierType: f.funderIdentifierType ?? 'Other' }
        : {}),
      ...(f.awardNumber ? { awardNumber: f.awardNumber } : {}),
      ...(f.awardTitle ? { awardTitle: f.awardTitle } : {}),
    })),
    schemaVersion: DATACITE_NAMESPACE,
  };
}

function dataciteCreatorJson(p: Creator): Record<string, unknown> {
  return {
    name: creatorDisplayName(p),
    nameType: p.nameType,
    ...(p.nameType === 'Personal' ? { givenName: p.givenName ?? undefined, familyName: p.familyName } : {}),
    nameIdentifiers: p.orcid
      ? [{ nameIdentifier: orcidUri(p.orcid), nameIdentifierScheme: 'ORCID', schemeUri: 'https://orcid.org' }]
      : [],
    affiliation: p.affiliations.map((a) =>
      a.rorId
        ? {
            name: a.name,
            affiliationIdentifier: a.rorId,
            affiliationIdentifierScheme: 'ROR',
            schemeUri: 'https://ror.org',
          }
        : { name: a.name },
    ),
  };
}

// DATACITE XML //

/** Drops C0 control characters other than tab, newline and carriage return: XML 1.0 does not allow them at all. */
function dropForbidden(s: string): string {
  let out = '';
  for (const ch of s) {
    const c = ch.charCodeAt(0);
    if (c < 0x20 && c !== 0x09 && c !== 0x0a && c !== 0x0d) continue;
    out += ch;
  }
  return out;
}

export function escapeXml(s: string): string {
  return dropForbidden(s)
    .replace(/&/g, '&amp;')
    .replace(/</g, '&lt;')
    .replace(/>/g, '&gt;')
    .replace(/"/g, '&quot;')
    .replace(/'/g, '&apos;');
}

type Attrs = Record<string, string | null | undefined>;
const attrs = (a: Attrs) =>
  Object.entries(a)
    .filter(([, v]) => v !== null && v !== undefined && v !== '')
    .map(([k, v]) => ` ${k}="${escapeXml(v as string)}"`)
    .join('');
const el = (name: string, a: Attrs, content: string, indent: string) =>
  `${indent}<${name}${attrs(a)}>${escapeXml(content)}</${name}>`;
const group = (name: string, children: string[], indent: string) =>
  children.length === 0 ? [] : [`${indent}<${name}>`, ...children, `${indent}</${name}>`];

/**
 * DataCite XML (kernel-4 namespace). Throws when a mandatory property is missing (missingForDataCite): a record
 * without them is not a DataCite record, so the route answers with the list instead.
 */
export function dataciteXml(ctx: CitationContext): string {
  const missing = missingForDataCite(ctx);
  if (missing.length > 0) throw new Error(`DataCite record incomplete: ${missing.join(', ')}`);
  const j = dataciteJson(ctx);
  const c = ctx.citation;
  const i1 = '  ';
  const i2 = '    ';
  const i3 = '      ';
  const creators = c.creators.map((p) => {
    const lines = [`${i2}<creator>`, el('creatorName', { nameType: p.nameType }, creatorDisplayName(p), i3)];
    if (p.nameType === 'Personal') {
      if (p.givenName) lines.push(el('givenName', {}, p.givenName, i3));
      if (p.familyName) lines.push(el('familyName', {}, p.familyName, i3));
    }
    if (p.orcid) {
      lines.push(
        el('nameIdentifier', { nameIdentifierScheme: 'ORCID', schemeURI: 'https://orcid.org' }, orcidUri(p.orcid), i3),
      );
    }
    for (const a of p.affiliations) {
      lines.push(
        el(
          'affiliation',
          a.rorId
            ? { affiliationIdentifier: a.rorId, affiliationIdentifierScheme: 'ROR', schemeURI: 'https://ror.org' }
            : {},
          a.name,
          i3,
        ),
      );
    }
    lines.push(`${i2}</creator>`);
    return lines.join('\n');
  });
  const rights = (j.rightsList as Record<string, string>[]).map((r) =>
    el(
      'rights',
      {
        'xml:lang': 'en',
        rightsURI: r.rightsUri,
        rightsIdentifier: r.rightsIdentifier,
        rightsIdentifierScheme: r.rightsIdentifierScheme,
        schemeURI: r.schemeUri,
      },
      r.rights ?? '',
      i2,
    ),
  );
  const dates = (j.dates as { date: string; dateType: string; dateInformation?: string }[]).map((d) =>
    el('date', { dateType: d.dateType, dateInformation: d.dateInformation }, d.date, i2),
  );
  const funding = c.funding.map((f) =>
    [
      `${i2}<fundingReference>`,
      el('funderName', {}, f.funderName, i3),
      ...(f.funderIdentifier
        ? [el('funderIdentifier', { funderIdentifierType: f.funderIdentifierType ?? 'Other' }, f.funderIdentifier, i3)]
        : []),
      ...(f.awardNumber ? [el('awardNumber', {}, f.awardNumber, i3)] : []),
      ...(f.awardTitle ? [el('awardTitle', {}, f.awardTitle, i3)] : []),
      `${i2}</fundingReference>`,
    ].join('\n'),
  );
  const lines = [
    '<?xml version="1.0" encoding="UTF-8"?>',
    `<!-- DataCite Metadata Schema ${DATACITE_SCHEMA_VERSION} record written by Lobeline -->`,
    `<resource xmlns="${DATACITE_NAMESPACE}" xmlns:xsi="http://www.w3.org/2001/XMLSchema-instance" xsi:schemaLocation="${DATACITE_NAMESPACE} ${DATACITE_XSD}">`,
    el('identifier', { identifierType: 'DOI' }, c.doi as string, i1),
    ...group('creators', creators, i1),
    ...group('titles', [el('title', { 'xml:lang': 'en' }, recordTitle(ctx), i2)], i1),
    el('publisher', { 'xml:lang': 'en' }, c.publisher as string, i1),
    el('publicationYear', {}, String(c.publicationYear), i1),
    el('resourceType', { resourceTypeGeneral: 'Dataset' }, RESOURCE_TYPE, i1),
    ...group(
      'subjects',
      subjects(ctx).map((s) => el('subject', { 'xml:lang': 'en' }, s, i2)),
      i1,
    ),
    ...group('dates', dates, i1),
    el('language', {}, 'en', i1),
    ...group(
      'relatedIdentifiers',
      c.relatedIdentifiers.map((r) =>
        el(
          'relatedIdentifier',
          { relatedIdentifierType: r.identifierType, relationType: r.relationType },
          r.identifier,
          i2,
        ),
      ),
      i1,
    ),
    ...group(
      'sizes',
      (j.sizes as string[]).map((s) => el('size', {}, s, i2)),
      i1,
    ),
    ...group(
      'formats',
      (j.formats as string[]).map((s) => el('format', {}, s, i2)),
      i1,
    ),
    ...(c.version ? [el('version', {}, c.version, i1)] : []),
    ...group('rightsList', rights, i1),
    ...group(
      'descriptions',
      c.description ? [el('description', { 'xml:lang': 'en', descriptionType: 'Abstract' }, c.description, i2)] : [],
      i1,
    ),
    ...group('fundingReferences', funding, i1),
    '</resource>',
  ];
  return `${lines.join('\n')}\n`;
}

// SCHEMA.ORG JSON-LD //

/** schema.org Dataset (SCIENCE.md §11.4): name and description, and the recommended properties the metadata has. */
export function datasetJsonLd(ctx: CitationContext): WithContext<Dataset> {
  const c = ctx.citation;
  const embargo = underEmbargo(ctx);
  const doc: WithContext<Dataset> = {
    '@context': 'https://schema.org',
    '@type': 'Dataset',
    name: recordTitle(ctx),
    description:
      c.description ??
      `Photoelectron momentum images of ${ctx.campaign.target} at ${ctx.campaign.wavelengthNm} nm (campaign "${ctx.campaign.name}").`,
    url: ctx.landingUrl,
    ...(c.doi
      ? {
          identifier: {
            '@type': 'PropertyValue',
            propertyID: 'DOI',
            value: c.doi,
            url: doiUri(c.doi),
          },
          sameAs: doiUri(c.doi),
        }
      : {}),
    ...(c.version ? { version: c.version } : {}),
    ...(c.keywords.length ? { keywords: c.keywords } : {}),
    ...(c.licence ? { license: spdxUri(c.licence) } : {}),
    creator: c.creators.map((p) =>
      p.nameType === 'Organizational'
        ? { '@type': 'Organization', name: p.organisationName ?? '' }
        : {
            '@type': 'Person',
            name: [p.givenName, p.familyName].filter(Boolean).join(' '),
            ...(p.givenName ? { givenName: p.givenName } : {}),
            ...(p.familyName ? { familyName: p.familyName } : {}),
            ...(p.orcid ? { identifier: orcidUri(p.orcid), sameAs: orcidUri(p.orcid) } : {}),
            ...(p.affiliations.length
              ? {
                  affiliation: p.affiliations.map((a) => ({
                    '@type': 'Organization' as const,
                    name: a.name,
                    ...(a.rorId ? { identifier: a.rorId } : {}),
                  })),
                }
              : {}),
          },
    ),
    ...(c.publisher ? { publisher: { '@type': 'Organization', name: c.publisher } } : {}),
    ...(c.publicationYear !== null ? { datePublished: String(c.publicationYear) } : {}),
    ...(c.funding.length
      ? {
          funding: c.funding.map((f) => ({
            '@type': 'Grant',
            ...(f.awardNumber ? { identifier: f.awardNumber } : {}),
            ...(f.awardTitle ? { name: f.awardTitle } : {}),
            funder: { '@type': 'Organization', name: f.funderName },
          })),
        }
      : {}),
    isAccessibleForFree: !embargo,
    ...(embargo
      ? {
          conditionsOfAccess: `Under embargo until ${ctx.campaign.embargoUntil}: the files are not available before that day.`,
        }
      : {
          encodingFormat: HDF5_MEDIA_TYPE,
          size: describeFiles(ctx).join(', '),
        }),
    variableMeasured: 'Photoelectron momentum distribution (counts per detector pixel)',
  };
  return doc;
}
