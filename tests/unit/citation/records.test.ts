// Citation records of a campaign (C10, issue 14) checked against the standards they follow:
// - DataCite Metadata Schema 4.x: the mandatory properties and controlled values as SCIENCE.md §11.3 summarises
//   the DataCite 4.x documentation (Identifier with identifierType DOI, Creator/creatorName, Title, Publisher,
//   PublicationYear as YYYY, ResourceType with resourceTypeGeneral "Dataset"); the controlled lists of
//   lib/citation/vocabulary.ts are [memory] of the schema's appendix.
// - XML well-formedness with Debian's xmllint (libxml2-utils, installed by scripts/start.sh). The DataCite XSD
//   itself cannot be fetched here (no network), so validity against it is not checked.
// - schema.org Dataset JSON-LD expanded with the jsonld package (jsonld 9.0.0) and checked for SCIENCE.md §11.4's
//   properties as full schema.org IRIs.
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import jsonld from 'jsonld';
import { afterAll, describe, expect, it } from 'vitest';
import {
  type CitationContext,
  dataciteJson,
  dataciteXml,
  datasetJsonLd,
  missingForDataCite,
} from '@/lib/citation/records';
import { citationBodySchema, EMPTY_CITATION } from '@/lib/citation/schema';
import {
  DATACITE_NAMESPACE,
  FUNDER_IDENTIFIER_TYPES,
  NAME_TYPES,
  RELATED_IDENTIFIER_TYPES,
  RELATION_TYPES,
} from '@/lib/citation/vocabulary';

const XMLLINT = '/usr/bin/xmllint';
const dir = mkdtempSync(path.join(tmpdir(), 'lobeline-citation-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Runs xmllint --noout on the text; returns its exit status and messages. */
function xmllint(xml: string, name: string): { status: number | null; stderr: string } {
  const file = path.join(dir, name);
  writeFileSync(file, xml);
  const r = spawnSync(XMLLINT, ['--noout', file], { encoding: 'utf8' });
  return { status: r.status, stderr: r.stderr };
}

/** Elements of a namespace-qualified name in the DataCite namespace, read back by xmllint's XPath. */
function xpath(xml: string, expr: string): string {
  const file = path.join(dir, 'q.xml');
  writeFileSync(file, xml);
  return execFileSync(XMLLINT, ['--xpath', expr, file], { encoding: 'utf8' }).replace(/\n$/, '');
}
const dc = (name: string) => `*[local-name()='${name}' and namespace-uri()='${DATACITE_NAMESPACE}']`;

// biome-ignore lint/suspicious/noExplicitAny: JSON read back from a record, narrowed by the assertions
type Loose = any;

// The demo lab's invented campaign (demo data, not a real dataset).
const full = citationBodySchema.parse({
  title: 'Attoclock offsets of helium at 800 nm & 735 nm <demo>',
  publisher: 'Demo Lab Attosecond Facility',
  publicationYear: 2026,
  doi: '10.5555/demo-lab.attoclock.1',
  version: '1.0',
  licence: 'CC-BY-4.0',
  description: 'Photoelectron momentum images of He in elliptical light, "demo" campaign.',
  keywords: ['attoclock', 'strong-field ionization'],
  creators: [
    {
      nameType: 'Personal',
      givenName: 'Ada',
      familyName: 'Quill',
      orcid: '0000-0002-1825-0097',
      affiliations: [{ name: 'Demo Lab, Institute of Invented Physics', rorId: 'https://ror.org/0abcde123' }],
    },
    { nameType: 'Organizational', organisationName: 'Demo Lab Detector Group' },
  ],
  funding: [
    {
      funderName: 'Invented Science Foundation',
      funderIdentifier: 'https://ror.org/0fghij456',
      funderIdentifierType: 'ROR',
      awardNumber: 'ISF-42',
    },
  ],
  relatedIdentifiers: [
    { identifier: '10.5555/demo-lab.paper.7', identifierType: 'DOI', relationType: 'IsSupplementTo' },
    { identifier: '10.5555/demo-lab.raw.7', identifierType: 'DOI', relationType: 'IsDerivedFrom' },
  ],
});

const ctx = (over: Partial<CitationContext> = {}): CitationContext => ({
  campaign: {
    id: 12,
    name: 'He attoclock 800 nm',
    target: 'He',
    wavelengthNm: 800,
    experimentKind: 'angular_streaking',
    embargoUntil: null,
  },
  citation: full,
  files: { count: 3, totalBytes: 3 * 1024 * 1024 },
  today: '2026-12-03',
  landingUrl: 'http://127.0.0.1:3100/campaigns/12',
  ...over,
});

describe('DataCite 4.x XML', () => {
  const xml = dataciteXml(ctx());

  it('is well-formed (xmllint --noout exits 0)', () => {
    const r = xmllint(xml, 'full.xml');
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
  });
  it('the xmllint check can fail: a truncated record is refused', () => {
    const r = xmllint(xml.slice(0, xml.length - 20), 'broken.xml');
    expect(r.status).not.toBe(0);
  });
  it('escapes markup in user text (the title has & and < >)', () => {
    expect(xpath(xml, `string(//${dc('title')})`)).toBe('Attoclock offsets of helium at 800 nm & 735 nm <demo>');
  });
  it('drops control characters XML 1.0 forbids (W3C XML 1.0 §2.2 Char production) and stays well-formed', () => {
    const odd = dataciteXml(ctx({ citation: { ...full, description: 'bell\u0007 and tab\t stay readable' } }));
    expect(xmllint(odd, 'control.xml').status).toBe(0);
    expect(xpath(odd, `string(//${dc('description')})`)).toBe('bell and tab\t stay readable');
  });
  it('has every mandatory property of SCIENCE.md §11.3 in the kernel-4 namespace', () => {
    expect(xpath(xml, `string(/${dc('resource')}/${dc('identifier')}/@identifierType)`)).toBe('DOI');
    expect(xpath(xml, `string(/${dc('resource')}/${dc('identifier')})`)).toBe('10.5555/demo-lab.attoclock.1');
    expect(xpath(xml, `count(//${dc('creators')}/${dc('creator')}/${dc('creatorName')})`)).toBe('2');
    expect(xpath(xml, `string(//${dc('creator')}[1]/${dc('creatorName')})`)).toBe('Quill, Ada');
    expect(xpath(xml, `string(//${dc('titles')}/${dc('title')})`).length).toBeGreaterThan(0);
    expect(xpath(xml, `string(//${dc('publisher')})`)).toBe('Demo Lab Attosecond Facility');
    expect(xpath(xml, `string(//${dc('publicationYear')})`)).toMatch(/^\d{4}$/);
    expect(xpath(xml, `string(//${dc('resourceType')}/@resourceTypeGeneral)`)).toBe('Dataset');
  });
  it('uses controlled values for nameType, relations, identifiers and funders', () => {
    const nameTypes = xpath(xml, `//${dc('creatorName')}/@nameType`).match(/nameType="([^"]+)"/g) ?? [];
    expect(nameTypes.length).toBe(2);
    for (const n of nameTypes) expect(NAME_TYPES).toContain(n.slice(10, -1));
    const rel = xpath(xml, `//${dc('relatedIdentifier')}/@relationType`).match(/"([^"]+)"/g) ?? [];
    expect(rel.length).toBe(2);
    for (const v of rel) expect(RELATION_TYPES).toContain(v.slice(1, -1));
    const relType = xpath(xml, `//${dc('relatedIdentifier')}/@relatedIdentifierType`).match(/"([^"]+)"/g) ?? [];
    for (const v of relType) expect(RELATED_IDENTIFIER_TYPES).toContain(v.slice(1, -1));
    expect(FUNDER_IDENTIFIER_TYPES).toContain(xpath(xml, `string(//${dc('funderIdentifier')}/@funderIdentifierType)`));
  });
  it('identifies people by ORCID URI and the licence by its SPDX identifier', () => {
    expect(xpath(xml, `string(//${dc('nameIdentifier')}/@nameIdentifierScheme)`)).toBe('ORCID');
    expect(xpath(xml, `string(//${dc('nameIdentifier')})`)).toBe('https://orcid.org/0000-0002-1825-0097');
    expect(xpath(xml, `string(//${dc('rights')}[@rightsIdentifierScheme='SPDX']/@rightsIdentifier)`)).toBe('CC-BY-4.0');
  });
  it('refuses to write a record without the mandatory properties, naming them', () => {
    const empty = ctx({ citation: EMPTY_CITATION });
    expect(missingForDataCite(empty)).toEqual([
      'DOI (Identifier)',
      'at least one creator',
      'publisher',
      'publication year',
    ]);
    expect(() => dataciteXml(empty)).toThrow(/DOI/);
  });
});

describe('embargo: only what it allows', () => {
  const open = dataciteJson(ctx());
  const embargoed = dataciteJson(ctx({ campaign: { ...ctx().campaign, embargoUntil: '2027-06-30' } }));
  it('an open campaign lists its file summary and format', () => {
    expect(open.sizes).toEqual(['3 files', '3.0 MiB']);
    expect(open.formats).toEqual(['application/x-hdf5']);
  });
  it('an embargoed one says nothing about its files, says embargoed access and when it ends', () => {
    expect(embargoed.sizes).toEqual([]);
    expect(embargoed.formats).toEqual([]);
    expect(embargoed.dates).toEqual([{ date: '2027-06-30', dateType: 'Available', dateInformation: 'End of embargo' }]);
    expect(JSON.stringify(embargoed.rightsList)).toContain('info:eu-repo/semantics/embargoedAccess');
    const xml = dataciteXml(ctx({ campaign: { ...ctx().campaign, embargoUntil: '2027-06-30' } }));
    expect(xmllint(xml, 'embargo.xml').status).toBe(0);
    expect(xpath(xml, `count(//${dc('size')})`)).toBe('0');
    const ld = datasetJsonLd(ctx({ campaign: { ...ctx().campaign, embargoUntil: '2027-06-30' } })) as Loose;
    expect(ld.isAccessibleForFree).toBe(false);
    expect(ld.encodingFormat).toBeUndefined();
  });
  it('an embargo that ended yesterday no longer applies', () => {
    const j = dataciteJson(ctx({ campaign: { ...ctx().campaign, embargoUntil: '2026-12-02' } }));
    expect(j.sizes).toEqual(['3 files', '3.0 MiB']);
  });
});

describe('DataCite JSON', () => {
  it('carries the same mandatory properties as the XML', () => {
    const j = dataciteJson(ctx()) as Record<string, Loose>;
    expect(j.doi).toBe('10.5555/demo-lab.attoclock.1');
    expect(j.identifiers).toEqual([{ identifier: '10.5555/demo-lab.attoclock.1', identifierType: 'DOI' }]);
    expect(j.creators[0].name).toBe('Quill, Ada');
    expect(j.creators[0].nameIdentifiers[0].nameIdentifierScheme).toBe('ORCID');
    expect(j.titles[0].title).toMatch(/helium/);
    expect(j.publisher.name).toBe('Demo Lab Attosecond Facility');
    expect(j.publicationYear).toBe('2026');
    expect(j.types.resourceTypeGeneral).toBe('Dataset');
    expect(j.relatedIdentifiers[0]).toEqual({
      relatedIdentifier: '10.5555/demo-lab.paper.7',
      relatedIdentifierType: 'DOI',
      relationType: 'IsSupplementTo',
    });
  });
});

describe('schema.org Dataset JSON-LD (SCIENCE.md §11.4)', () => {
  // No network here: the document loader answers the schema.org context URL with the one mapping that matters for
  // expansion, "@vocab": "https://schema.org/" (the published context maps every term into the schema.org
  // vocabulary this way [memory]); every other URL is refused, so nothing is fetched.
  const documentLoader = async (url: string) => {
    if (url.replace(/\/$/, '') === 'https://schema.org') {
      return { contextUrl: undefined, documentUrl: url, document: { '@context': { '@vocab': 'https://schema.org/' } } };
    }
    throw new Error(`no network in tests: ${url}`);
  };
  const S = 'https://schema.org/';

  it('expands to a schema.org Dataset with name and description and the recommended properties', async () => {
    const doc = datasetJsonLd(ctx());
    const expanded = (await jsonld.expand(doc as never, { documentLoader: documentLoader as never })) as Record<
      string,
      Loose
    >[];
    expect(expanded).toHaveLength(1);
    const d = expanded[0]!;
    expect(d['@type']).toEqual([`${S}Dataset`]);
    // required by Google's dataset guidance (SCIENCE.md §11.4)
    expect(d[`${S}name`][0]['@value']).toMatch(/helium/);
    expect(d[`${S}description`][0]['@value']).toMatch(/momentum images/);
    // recommended ones this campaign fills
    for (const p of [
      'url',
      'sameAs',
      'identifier',
      'version',
      'keywords',
      'license',
      'creator',
      'isAccessibleForFree',
    ]) {
      expect(d[`${S}${p}`], p).toBeDefined();
    }
    expect(d[`${S}license`][0]['@value']).toBe('https://spdx.org/licenses/CC-BY-4.0.html');
    const person = d[`${S}creator`].find((c: Loose) => c['@type']?.[0] === `${S}Person`);
    expect(person[`${S}identifier`][0]['@value']).toBe('https://orcid.org/0000-0002-1825-0097');
    const id = d[`${S}identifier`][0];
    expect(id['@type']).toEqual([`${S}PropertyValue`]);
    expect(id[`${S}propertyID`][0]['@value']).toBe('DOI');
  });
  it('a record with only a name still has name and description (the campaign supplies them)', async () => {
    const expanded = (await jsonld.expand(datasetJsonLd(ctx({ citation: EMPTY_CITATION })) as never, {
      documentLoader: documentLoader as never,
    })) as Record<string, Loose>[];
    expect(expanded[0]![`${S}name`][0]['@value']).toBe('He attoclock 800 nm');
    expect(expanded[0]![`${S}description`][0]['@value']).toMatch(/He at 800 nm/);
  });
});
