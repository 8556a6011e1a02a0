// ORCID check digits and the zod schema of campaign citation metadata (C10, issue 14).
import spdxIds from 'spdx-license-ids/index.json';
import { describe, expect, it } from 'vitest';
import { mod11_2CheckChar, normalizeOrcid, orcidProblem } from '@/lib/citation/orcid';
import { citationBodySchema, isSpdxLicenceId, normalizeDoi } from '@/lib/citation/schema';

// ORCID's support page "Structure of the ORCID Identifier" uses 0000-0002-1825-0097 as its example of a valid iD
// and computes its check digit with ISO 7064 MOD 11-2 over the first 15 digits.
const ORCID_EXAMPLE = '0000-0002-1825-0097';

describe('ORCID (ISO 7064 MOD 11-2)', () => {
  it("accepts ORCID's documented example and computes its check digit 7", () => {
    expect(mod11_2CheckChar('000000021825009')).toBe('7');
    expect(normalizeOrcid(ORCID_EXAMPLE)).toBe(ORCID_EXAMPLE);
  });
  it('accepts the URI form, no hyphens, spaces and a lowercase x', () => {
    expect(normalizeOrcid(`https://orcid.org/${ORCID_EXAMPLE}`)).toBe(ORCID_EXAMPLE);
    expect(normalizeOrcid(' 0000000218250097 ')).toBe(ORCID_EXAMPLE);
    // An iD whose check character is X: 0000-0002-1694-233X is the example of an X check digit given on the same
    // ORCID page [memory]; its value is recomputed here, so the test does not rest on the memory.
    expect(mod11_2CheckChar('000000021694233')).toBe('X');
    expect(normalizeOrcid('0000-0002-1694-233x')).toBe('0000-0002-1694-233X');
  });
  it('refuses every single-digit change of the example (MOD 11-2 detects all single substitutions)', () => {
    const digits = ORCID_EXAMPLE.replace(/-/g, '');
    let refused = 0;
    let tried = 0;
    for (let pos = 0; pos < 16; pos++) {
      for (const d of '0123456789X') {
        if (d === digits[pos] || (pos < 15 && d === 'X')) continue;
        const mutated = digits.slice(0, pos) + d + digits.slice(pos + 1);
        tried++;
        if (normalizeOrcid(mutated) === null) refused++;
      }
    }
    expect(tried).toBe(15 * 9 + 10);
    expect(refused).toBe(tried);
  });
  it('refuses swapped neighbouring digits of the example (MOD 11-2 detects transpositions)', () => {
    const digits = ORCID_EXAMPLE.replace(/-/g, '');
    for (let pos = 0; pos < 15; pos++) {
      if (digits[pos] === digits[pos + 1]) continue;
      const swapped = digits.slice(0, pos) + digits[pos + 1] + digits[pos] + digits.slice(pos + 2);
      expect(normalizeOrcid(swapped), swapped).toBeNull();
    }
  });
  it('says why in words', () => {
    expect(orcidProblem('0000-0002-1825-0098')).toMatch(/check digit/);
    expect(orcidProblem('1234')).toMatch(/16 characters/);
    expect(orcidProblem(ORCID_EXAMPLE)).toBeNull();
  });
});

describe('citation metadata schema', () => {
  const creator = {
    nameType: 'Personal',
    givenName: 'Ada',
    familyName: 'Quill',
    orcid: ORCID_EXAMPLE,
    affiliations: [],
  };
  it('normalizes ORCID, DOI and keywords and fills defaults', () => {
    const r = citationBodySchema.parse({
      doi: 'https://doi.org/10.5555/demo-lab.42',
      creators: [{ ...creator, orcid: `https://orcid.org/${ORCID_EXAMPLE}` }],
      keywords: ['attoclock', 'attoclock', 'helium'],
      licence: 'CC-BY-4.0',
    });
    expect(r.doi).toBe('10.5555/demo-lab.42');
    expect(r.creators[0]?.orcid).toBe(ORCID_EXAMPLE);
    expect(r.keywords).toEqual(['attoclock', 'helium']);
    expect(r.funding).toEqual([]);
  });
  it('refuses a wrong ORCID check digit with the field named', () => {
    const r = citationBodySchema.safeParse({ creators: [{ ...creator, orcid: '0000-0002-1825-0096' }] });
    expect(r.success).toBe(false);
    expect(r.error?.issues[0]?.path).toEqual(['creators', 0, 'orcid']);
    expect(r.error?.issues[0]?.message).toMatch(/check digit/);
  });
  it('accepts SPDX identifiers from the SPDX License List and refuses near misses', () => {
    // spdx-license-ids 3.0.24 is the SPDX License List's identifiers as a package; CC-BY-4.0, CC0-1.0 and MIT are on it.
    expect((spdxIds as string[]).length).toBeGreaterThan(400);
    for (const id of ['CC-BY-4.0', 'CC0-1.0', 'MIT', 'CC-BY-SA-4.0']) expect(isSpdxLicenceId(id), id).toBe(true);
    for (const id of ['cc-by-4.0', 'CC-BY', 'CC BY 4.0', 'GPL']) expect(isSpdxLicenceId(id), id).toBe(false);
    const r = citationBodySchema.safeParse({ licence: 'CC BY 4.0' });
    expect(r.success).toBe(false);
    expect(r.error?.issues[0]?.path).toEqual(['licence']);
  });
  it('checks DOIs (DOI Handbook §2.2 syntax: "10." prefix, "/" then suffix) and controlled relation types', () => {
    expect(normalizeDoi('doi:10.1103/PhysRevLett.62.1259')).toBe('10.1103/PhysRevLett.62.1259');
    expect(normalizeDoi('11.1103/x')).toBeNull();
    expect(normalizeDoi('10.1103')).toBeNull();
    const bad = citationBodySchema.safeParse({
      relatedIdentifiers: [{ identifier: 'not-a-doi', identifierType: 'DOI', relationType: 'IsSupplementTo' }],
    });
    expect(bad.success).toBe(false);
    const badRelation = citationBodySchema.safeParse({
      relatedIdentifiers: [{ identifier: '10.1103/x', identifierType: 'DOI', relationType: 'SupplementOf' }],
    });
    expect(badRelation.success).toBe(false);
    expect(badRelation.error?.issues[0]?.path).toEqual(['relatedIdentifiers', 0, 'relationType']);
  });
  it('needs a family name for a person and forbids an ORCID on an organisation', () => {
    const r = citationBodySchema.safeParse({
      creators: [
        { nameType: 'Personal', givenName: 'Ada' },
        { nameType: 'Organizational', organisationName: 'Demo Lab', orcid: ORCID_EXAMPLE },
      ],
    });
    expect(r.success).toBe(false);
    expect(r.error?.issues.map((i) => i.path.join('.'))).toEqual(['creators.0.familyName', 'creators.1.orcid']);
  });
});
