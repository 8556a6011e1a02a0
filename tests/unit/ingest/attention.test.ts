// The drop panel's per-file attention points (components/ingest/attention.ts): a file that differs from its
// campaign, a file already stored, a file dropped twice. The campaign facts are the seeded demo campaign's
// ("He 800 nm elliptical", scripts/seed.ts); the wavelength tolerance (0.5 %) is our own choice.
import { describe, expect, it } from 'vitest';
import { type AttentionItem, attentionFor } from '@/components/ingest/attention';

const HE = { name: 'He 800 nm elliptical', target: 'He', wavelengthNm: 800, experimentKind: 'angular_streaking' };
const item = (key: string, over: Partial<AttentionItem> = {}, summary = {}): AttentionItem => ({
  key,
  file: { name: `${key}.h5`, size: 1000, lastModified: 1 },
  sha256: null,
  precheck: { summary: { target: 'He', wavelengthNm: 800, experimentKind: 'angular_streaking', ...summary } },
  ...over,
});

describe('attention before sending', () => {
  it('says nothing for a file that matches its campaign', () => {
    const a = item('a', {}, { target: 'he', wavelengthNm: 802 });
    expect(attentionFor(a, [a], HE)).toEqual([]);
  });

  it('names a different target and wavelength', () => {
    const a = item('a', {}, { target: 'Ar', wavelengthNm: 1300 });
    expect(attentionFor(a, [a], HE).map((x) => x.sentence)).toEqual([
      'The file\u2019s target is Ar, but the campaign \u201cHe 800 nm elliptical\u201d is on He.'.replace(
        '\u2019',
        "'",
      ),
      "The file's wavelength is 1300 nm, but the campaign \u201cHe 800 nm elliptical\u201d is at 800 nm.",
    ]);
  });

  it('names a stored duplicate with its scan, and a file dropped twice', () => {
    const stored = item('a', {
      sha256: 'f'.repeat(64),
      storedMatch: {
        sha256: 'f'.repeat(64),
        rawFileId: 3,
        fileName: 'first.h5',
        rawStatus: 'accepted',
        campaignScanId: 12,
        scans: [{ scanId: 12, shiftId: 4, shiftTitle: 'Night', campaignName: HE.name, sameCampaign: true }],
      },
    });
    expect(attentionFor(stored, [stored], HE)[0]).toMatchObject({
      kind: 'stored',
      sentence: expect.stringContaining('scan 12'),
    });
    const one = item('x', { sha256: 'e'.repeat(64) });
    const two = { ...item('y', { sha256: 'e'.repeat(64) }) };
    expect(attentionFor(one, [one, two], HE)).toEqual([]);
    expect(attentionFor(two, [one, two], HE)).toEqual([
      { kind: 'in-drop', sentence: 'The same file (same SHA-256) as \u201cx.h5\u201d above, dropped twice.' },
    ]);
    // before the hashes are done: same name, size and date
    const three = item('x');
    const four = { ...item('x'), key: 'x2' };
    expect(attentionFor(four, [three, four], HE)[0]?.kind).toBe('in-drop');
  });
});
