// Controlled values of the DataCite Metadata Schema 4.x used by Lobeline's citation records (SCIENCE.md §11.3).
// The lists are the schema's own controlled lists as far as Lobeline uses them, written down [from memory] of the
// DataCite 4.x documentation (appendix "Controlled list definitions"); confirm at schema.datacite.org before a
// release. resourceTypeGeneral is always "Dataset" here (SCIENCE.md §11.3).

export const DATACITE_SCHEMA_VERSION = '4.7'; // SCIENCE.md §11.3: current version
export const DATACITE_NAMESPACE = 'http://datacite.org/schema/kernel-4';
export const DATACITE_XSD = 'https://schema.datacite.org/meta/kernel-4/metadata.xsd';

export const NAME_TYPES = ['Personal', 'Organizational'] as const;

export const RELATED_IDENTIFIER_TYPES = [
  'ARK',
  'arXiv',
  'bibcode',
  'CSTR',
  'DOI',
  'EAN13',
  'EISSN',
  'Handle',
  'IGSN',
  'ISBN',
  'ISSN',
  'ISTC',
  'LISSN',
  'LSID',
  'PMID',
  'PURL',
  'RRID',
  'UPC',
  'URL',
  'URN',
  'w3id',
] as const;
export type RelatedIdentifierType = (typeof RELATED_IDENTIFIER_TYPES)[number];

export const RELATION_TYPES = [
  'IsCitedBy',
  'Cites',
  'IsSupplementTo',
  'IsSupplementedBy',
  'IsContinuedBy',
  'Continues',
  'IsDescribedBy',
  'Describes',
  'HasMetadata',
  'IsMetadataFor',
  'HasVersion',
  'IsVersionOf',
  'IsNewVersionOf',
  'IsPreviousVersionOf',
  'IsPartOf',
  'HasPart',
  'IsPublishedIn',
  'IsReferencedBy',
  'References',
  'IsDocumentedBy',
  'Documents',
  'IsCompiledBy',
  'Compiles',
  'IsVariantFormOf',
  'IsOriginalFormOf',
  'IsIdenticalTo',
  'IsReviewedBy',
  'Reviews',
  'IsDerivedFrom',
  'IsSourceOf',
  'IsRequiredBy',
  'Requires',
  'IsObsoletedBy',
  'Obsoletes',
  'IsCollectedBy',
  'Collects',
  'HasTranslation',
  'IsTranslationOf',
] as const;
export type RelationType = (typeof RELATION_TYPES)[number];

export const FUNDER_IDENTIFIER_TYPES = ['Crossref Funder ID', 'GRID', 'ISNI', 'ROR', 'Other'] as const;
export type FunderIdentifierType = (typeof FUNDER_IDENTIFIER_TYPES)[number];

export const DESCRIPTION_TYPES = [
  'Abstract',
  'Methods',
  'SeriesInformation',
  'TableOfContents',
  'TechnicalInfo',
  'Other',
] as const;

export const DATE_TYPES = [
  'Accepted',
  'Available',
  'Copyrighted',
  'Collected',
  'Coverage',
  'Created',
  'Issued',
  'Submitted',
  'Updated',
  'Valid',
  'Withdrawn',
  'Other',
] as const;

/** resourceTypeGeneral values [memory], "Poster" and "Presentation" added in 4.7 (SCIENCE.md §11.3). */
export const RESOURCE_TYPE_GENERAL = [
  'Audiovisual',
  'Award',
  'Book',
  'BookChapter',
  'Collection',
  'ComputationalNotebook',
  'ConferencePaper',
  'ConferenceProceeding',
  'DataPaper',
  'Dataset',
  'Dissertation',
  'Event',
  'Image',
  'Instrument',
  'InteractiveResource',
  'Journal',
  'JournalArticle',
  'Model',
  'OutputManagementPlan',
  'PeerReview',
  'PhysicalObject',
  'Poster',
  'Presentation',
  'Preprint',
  'Project',
  'Report',
  'Service',
  'Software',
  'Sound',
  'Standard',
  'StudyRegistration',
  'Text',
  'Workflow',
  'Other',
] as const;
