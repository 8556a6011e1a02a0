// The public side of lib/policy.ts (C10, issue 14) and the result filter of audit events (C13). Pure functions.
// The embargo boundary is the one the citation records use (lib/citation/records.ts underEmbargo: a campaign is
// under embargo while its embargo day is later than today, so the files open on that day).
import { describe, expect, it } from 'vitest';
import { RESULT_DETAIL_KEYS, withoutResults } from '@/lib/audit-kinds';
import { underEmbargo } from '@/lib/citation/records';
import { AppError } from '@/lib/errors';
import { authorizePublic, canPublic } from '@/lib/policy';

const today = '2026-12-03';
const campaign = (embargoUntil: string | null) => ({
  id: 1,
  name: 'x',
  target: 'Ar',
  wavelengthNm: 800,
  experimentKind: 'angular_streaking',
  embargoUntil,
});

describe('public landing page access', () => {
  it('nothing is public until published', () => {
    const s = { published: false, embargoUntil: null, today };
    expect(canPublic('landing.read', s)).toBe(false);
    expect(canPublic('landing.files', s)).toBe(false);
    expect(() => authorizePublic('landing.read', s)).toThrow(AppError);
    expect(() => authorizePublic('landing.read', null)).toThrow(/no public page/);
  });
  it('a published page shows the citation; the files only when no embargo holds, as the records decide', () => {
    for (const embargoUntil of [null, '2026-12-02', today, '2026-12-04', '2099-06-30']) {
      const s = { published: true, embargoUntil, today };
      expect(canPublic('landing.read', s)).toBe(true);
      expect(canPublic('landing.files', s), String(embargoUntil)).toBe(
        !underEmbargo({ campaign: campaign(embargoUntil), today }),
      );
    }
    expect(canPublic('landing.files', { published: true, embargoUntil: '2026-12-04', today })).toBe(false);
    expect(canPublic('landing.files', { published: true, embargoUntil: today, today })).toBe(true);
  });
  it('the refusal is the 404 of a campaign that does not exist', () => {
    try {
      authorizePublic('landing.files', { published: true, embargoUntil: '2099-01-01', today });
      expect.unreachable();
    } catch (err) {
      expect((err as AppError).code).toBe('not_found:campaign');
      expect((err as AppError).status).toBe(404);
    }
  });
});

describe('audit events without results', () => {
  it('drops the result keys and keeps everything else', () => {
    expect(RESULT_DETAIL_KEYS).toContain('offsetDeg');
    const e = { id: 1, details: { resultId: 4, calibrationId: 2, offsetDeg: 11.5 } };
    expect(withoutResults(e).details).toEqual({ resultId: 4, calibrationId: 2 });
    expect(e.details.offsetDeg).toBe(11.5); // the input is not changed
    const plain = { id: 2, details: { sha256: 'ab' } };
    expect(withoutResults(plain)).toBe(plain);
    expect(withoutResults({ id: 3, details: null }).details).toBeNull();
  });
});
