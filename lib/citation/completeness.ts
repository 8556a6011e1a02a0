// Metadata completeness (C10, issue 14): which required and recommended items of a campaign's citation metadata and
// of a raw file's own metadata are present, as a score with the missing items named. "Required" is what a DataCite
// record cannot go without (SCIENCE.md §11.3 mandatory properties; resourceType is always "Dataset" and the title
// falls back to the campaign's name, so neither can be missing) plus licence and description, which Lobeline asks
// of every citable campaign (schema.org's name + description, SCIENCE.md §11.4). "Recommended" follows §11.3's
// recommended and optional list as far as a campaign fills it. A file's items are FORMATS.md §1's optional
// descriptive fields, the same list lib/db/queries/ingest.ts metadataCompleteness counts at upload.
import type { ScanMetadata } from '@/reduction/formats';
import type { CitationBody } from './schema';

export interface CompletenessItem {
  key: string;
  label: string;
  level: 'required' | 'recommended';
  present: boolean;
}

export interface Completeness {
  /** Share of all items present, 0…1. */
  score: number;
  requiredMissing: string[];
  recommendedMissing: string[];
  items: CompletenessItem[];
}

export function citationItems(c: CitationBody): CompletenessItem[] {
  const people = c.creators.filter((x) => x.nameType === 'Personal');
  return [
    { key: 'doi', label: 'DOI', level: 'required', present: !!c.doi },
    { key: 'creators', label: 'creator', level: 'required', present: c.creators.length > 0 },
    { key: 'publisher', label: 'publisher', level: 'required', present: !!c.publisher },
    { key: 'publicationYear', label: 'publication year', level: 'required', present: c.publicationYear !== null },
    { key: 'licence', label: 'licence', level: 'required', present: !!c.licence },
    { key: 'description', label: 'description', level: 'required', present: !!c.description },
    {
      key: 'orcid',
      label: 'ORCID iD of every person',
      level: 'recommended',
      present: people.length > 0 && people.every((p) => !!p.orcid),
    },
    {
      key: 'affiliations',
      label: 'affiliation of every creator',
      level: 'recommended',
      present: c.creators.length > 0 && c.creators.every((p) => p.affiliations.length > 0),
    },
    { key: 'keywords', label: 'keywords', level: 'recommended', present: c.keywords.length > 0 },
    { key: 'funding', label: 'funding', level: 'recommended', present: c.funding.length > 0 },
    {
      key: 'relatedIdentifiers',
      label: 'related identifier (paper or raw-data record)',
      level: 'recommended',
      present: c.relatedIdentifiers.length > 0,
    },
    { key: 'version', label: 'version', level: 'recommended', present: !!c.version },
  ];
}

/** Keys of ScanMetadata behind the file's recommended items (the register's SQL reads them from the JSON). */
export const FILE_OPTIONAL_KEYS = [
  'title',
  'ellipticity',
  'helicity',
  'pulseDurationFs',
  'detectorDescription',
  'nominalMomentumPerPixelAu',
  'xAxis',
  'yAxis',
] as const;

const FILE_LABELS: Record<(typeof FILE_OPTIONAL_KEYS)[number], string> = {
  title: 'file title',
  ellipticity: 'ellipticity',
  helicity: 'helicity',
  pulseDurationFs: 'pulse duration',
  detectorDescription: 'detector description',
  nominalMomentumPerPixelAu: 'nominal momentum scale',
  xAxis: 'x axis',
  yAxis: 'y axis',
};

export function fileItems(meta: ScanMetadata | null): CompletenessItem[] {
  // present = stated (not null): the same rule as metadataCompleteness in lib/db/queries/ingest.ts
  const has = (v: unknown) => v !== null && v !== undefined;
  return [
    { key: 'file.metadata', label: 'readable file metadata', level: 'required', present: !!meta },
    ...FILE_OPTIONAL_KEYS.map(
      (key): CompletenessItem => ({
        key: `file.${key}`,
        label: FILE_LABELS[key],
        level: 'recommended',
        present: !!meta && has(meta[key]),
      }),
    ),
  ];
}

export function summarize(items: CompletenessItem[]): Completeness {
  const present = items.filter((i) => i.present).length;
  return {
    score: items.length === 0 ? 1 : present / items.length,
    requiredMissing: items.filter((i) => !i.present && i.level === 'required').map((i) => i.label),
    recommendedMissing: items.filter((i) => !i.present && i.level === 'recommended').map((i) => i.label),
    items,
  };
}

/** How many items citationItems and fileItems weigh (for the register's sort expression in SQL). */
export const CITATION_ITEM_COUNT = 12;
export const FILE_ITEM_COUNT = 9;
