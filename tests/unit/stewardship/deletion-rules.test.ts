// The deletion rules of C10 (PRODUCT.md: "Nothing is deleted before its retention date"; issue 14: a legal hold
// blocks deletion outright) and the dates the retention form accepts.
import { describe, expect, it } from 'vitest';
import { deletionBlockers, effectiveRetention } from '@/lib/stewardship/deletion-rules';
import { retentionBody } from '@/lib/stewardship/schemas';

const base = { retentionUntil: '2026-06-30', fileLegalHold: false, campaignLegalHold: false, deleted: false };

describe('deletionBlockers', () => {
  it('allows deletion only from the day after the retention date', () => {
    expect(deletionBlockers(base, '2026-06-29')).toHaveLength(1);
    expect(deletionBlockers(base, '2026-06-30')[0]).toMatch(/kept until 2026-06-30/);
    expect(deletionBlockers(base, '2026-07-01')).toEqual([]);
  });
  it('keeps a file that has no retention date at all', () => {
    expect(deletionBlockers({ ...base, retentionUntil: null }, '2099-01-01')[0]).toMatch(/No retention date/);
  });
  it('a legal hold on the file or on its campaign blocks deletion even long after retention', () => {
    expect(deletionBlockers({ ...base, fileLegalHold: true }, '2099-01-01')[0]).toMatch(/legal hold/);
    expect(deletionBlockers({ ...base, campaignLegalHold: true }, '2099-01-01')[0]).toMatch(
      /campaign is under a legal hold/,
    );
  });
  it('names every reason at once', () => {
    expect(deletionBlockers({ ...base, fileLegalHold: true, campaignLegalHold: true }, '2026-01-01')).toHaveLength(3);
  });
  it("a file's own retention date wins over its campaign's", () => {
    expect(effectiveRetention('2030-01-01', '2040-01-01')).toBe('2030-01-01');
    expect(effectiveRetention(null, '2040-01-01')).toBe('2040-01-01');
    expect(effectiveRetention(null, null)).toBeNull();
  });
});

describe('retention form', () => {
  it('accepts real days and refuses impossible ones (ISO 8601 calendar dates)', () => {
    expect(retentionBody.parse({ retentionUntil: '2036-12-31', embargoUntil: '' })).toMatchObject({
      retentionUntil: '2036-12-31',
      embargoUntil: null,
      legalHold: false,
    });
    expect(retentionBody.safeParse({ retentionUntil: '2027-02-29' }).success).toBe(false); // 2027 is no leap year
    expect(retentionBody.safeParse({ retentionUntil: '2028-02-29' }).success).toBe(true);
    expect(retentionBody.safeParse({ retentionUntil: '31.12.2036' }).success).toBe(false);
  });
  it('asks why a legal hold applies', () => {
    const r = retentionBody.safeParse({ legalHold: true });
    expect(r.success).toBe(false);
    expect(r.error?.issues[0]?.path).toEqual(['legalHoldNote']);
  });
});
