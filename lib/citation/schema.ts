// The citation metadata of a campaign (C10, issue 14): what a DataCite record and a schema.org Dataset need beyond
// what Lobeline already knows (campaign name, target, wavelength, files). Edited by the team's PI and by data
// stewards; every field is parsed here, on the server, and by the form for its messages.
import spdxIds from 'spdx-license-ids/index.json';
import { z } from 'zod';
import { normalizeOrcid, orcidProblem } from './orcid';
import { FUNDER_IDENTIFIER_TYPES, NAME_TYPES, RELATED_IDENTIFIER_TYPES, RELATION_TYPES } from './vocabulary';

const SPDX = new Set<string>(spdxIds as string[]);

/** Whether `id` is an SPDX licence identifier of the SPDX License List (package spdx-license-ids 3.0.24). */
export function isSpdxLicenceId(id: string): boolean {
  return SPDX.has(id);
}

// DOI syntax: "10." + registrant code + "/" + suffix (DOI Handbook §2.2; the 4–9 digit registrant code is the
// common-practice pattern Crossref recommends for matching modern DOIs).
const DOI_SHAPE = /^10\.\d{4,9}\/\S+$/;

/** `10.xxxx/yyy` from a DOI typed bare, as doi:, or as a doi.org URL; null when it is not a DOI. */
export function normalizeDoi(input: string): string | null {
  const bare = input
    .trim()
    .replace(/^https?:\/\/(dx\.)?doi\.org\//i, '')
    .replace(/^doi:\s*/i, '');
  return DOI_SHAPE.test(bare) ? bare : null;
}

const text = (max: number, label: string) => z.string().trim().max(max, `${label} may have at most ${max} characters.`);
const optionalText = (max: number, label: string) =>
  text(max, label)
    .nullish()
    .transform((v) => (v ? v : null));

const orcidField = z
  .string()
  .trim()
  .nullish()
  .transform((v, ctx) => {
    if (!v) return null;
    const problem = orcidProblem(v);
    if (problem) {
      ctx.addIssue({ code: 'custom', message: problem });
      return z.NEVER;
    }
    return normalizeOrcid(v);
  });

const affiliationSchema = z.object({
  name: text(200, 'An affiliation').min(2, 'Name the institution.'),
  /** ROR identifier as https://ror.org/0xxxxxxxx (shape only). */
  rorId: z
    .string()
    .trim()
    .nullish()
    .transform((v) => (v ? v : null))
    .refine((v) => v === null || /^https:\/\/ror\.org\/0[a-z0-9]{6}\d{2}$/.test(v), {
      message: 'A ROR identifier looks like https://ror.org/0abcde123.',
    }),
});

export const creatorSchema = z
  .object({
    nameType: z.enum(NAME_TYPES).default('Personal'),
    givenName: optionalText(100, 'A given name'),
    familyName: optionalText(100, 'A family name'),
    /** For an organisation (nameType Organizational): its name. */
    organisationName: optionalText(200, 'An organisation name'),
    orcid: orcidField,
    affiliations: z.array(affiliationSchema).max(10, 'At most 10 affiliations per creator.').default([]),
  })
  .superRefine((c, ctx) => {
    if (c.nameType === 'Personal' && !c.familyName)
      ctx.addIssue({ code: 'custom', path: ['familyName'], message: 'Enter the family name of this creator.' });
    if (c.nameType === 'Organizational' && !c.organisationName)
      ctx.addIssue({ code: 'custom', path: ['organisationName'], message: 'Enter the name of this organisation.' });
    if (c.nameType === 'Organizational' && c.orcid)
      ctx.addIssue({ code: 'custom', path: ['orcid'], message: 'ORCID iDs belong to people, not organisations.' });
  });
export type Creator = z.output<typeof creatorSchema>;

export const fundingSchema = z.object({
  funderName: text(200, 'A funder name').min(2, 'Name the funder.'),
  funderIdentifier: optionalText(200, 'A funder identifier'),
  funderIdentifierType: z
    .enum(FUNDER_IDENTIFIER_TYPES)
    .nullish()
    .transform((v) => v ?? null),
  awardNumber: optionalText(100, 'An award number'),
  awardTitle: optionalText(300, 'An award title'),
});
export type Funding = z.output<typeof fundingSchema>;

export const relatedIdentifierSchema = z
  .object({
    identifier: text(500, 'An identifier').min(3, 'Enter the identifier.'),
    identifierType: z.enum(RELATED_IDENTIFIER_TYPES, 'Choose the kind of identifier (DOI, URL, arXiv …).'),
    relationType: z.enum(RELATION_TYPES, 'Choose how it relates (e.g. IsSupplementTo for the paper).'),
  })
  .transform((r, ctx) => {
    if (r.identifierType === 'DOI') {
      const doi = normalizeDoi(r.identifier);
      if (!doi) {
        ctx.addIssue({ code: 'custom', path: ['identifier'], message: 'A DOI looks like 10.1234/abcd.' });
        return z.NEVER;
      }
      return { ...r, identifier: doi };
    }
    if (r.identifierType === 'URL' && !/^https?:\/\/\S+$/.test(r.identifier)) {
      ctx.addIssue({ code: 'custom', path: ['identifier'], message: 'A URL starts with https:// or http://.' });
      return z.NEVER;
    }
    return r;
  });
export type RelatedIdentifier = z.output<typeof relatedIdentifierSchema>;

export const citationBodySchema = z.object({
  /** Defaults to the campaign's name when empty. */
  title: optionalText(300, 'The title'),
  publisher: optionalText(200, 'The publisher'),
  publicationYear: z.coerce
    .number()
    .int('The publication year is a whole number.')
    .min(1900, 'The publication year must be between 1900 and 2100.')
    .max(2100, 'The publication year must be between 1900 and 2100.')
    .nullish()
    .transform((v) => v ?? null),
  doi: z
    .string()
    .trim()
    .nullish()
    .transform((v, ctx) => {
      if (!v) return null;
      const doi = normalizeDoi(v);
      if (!doi) {
        ctx.addIssue({
          code: 'custom',
          message: 'A DOI looks like 10.1234/abcd (the https://doi.org/ prefix is fine).',
        });
        return z.NEVER;
      }
      return doi;
    }),
  version: optionalText(32, 'The version'),
  licence: z
    .string()
    .trim()
    .nullish()
    .transform((v) => (v ? v : null))
    .refine((v) => v === null || isSpdxLicenceId(v), {
      message: 'Use an SPDX licence identifier, e.g. CC-BY-4.0 or CC0-1.0 (spelling and case matter).',
    }),
  description: optionalText(5000, 'The description'),
  keywords: z
    .array(text(80, 'A keyword').min(1, 'A keyword cannot be empty.'))
    .max(30, 'At most 30 keywords.')
    .default([])
    .transform((list) => [...new Set(list)]),
  creators: z.array(creatorSchema).max(50, 'At most 50 creators.').default([]),
  funding: z.array(fundingSchema).max(20, 'At most 20 funding references.').default([]),
  relatedIdentifiers: z.array(relatedIdentifierSchema).max(50, 'At most 50 related identifiers.').default([]),
});
export type CitationBody = z.output<typeof citationBodySchema>;
export type CitationInput = z.input<typeof citationBodySchema>;

export const EMPTY_CITATION: CitationBody = {
  title: null,
  publisher: null,
  publicationYear: null,
  doi: null,
  version: null,
  licence: null,
  description: null,
  keywords: [],
  creators: [],
  funding: [],
  relatedIdentifiers: [],
};

/** Display name of a creator: "Family, Given" for people (DataCite's creatorName convention), else the organisation. */
export function creatorDisplayName(c: Creator): string {
  if (c.nameType === 'Organizational') return c.organisationName ?? '';
  return c.givenName ? `${c.familyName}, ${c.givenName}` : (c.familyName ?? '');
}
