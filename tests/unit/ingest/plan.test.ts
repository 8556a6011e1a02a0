// Upload planning against S3's multipart limits (AWS S3 documentation: 1…10 000 parts, ≥ 5 MiB except the last,
// ≤ 5 GiB per part, ≤ 5 TiB per object) and the ingest log check.
import { describe, expect, it } from 'vitest';
import { checkAgainstLog } from '@/lib/ingest/log-check';
import { MAX_PARTS, partRange, planUpload, retryDelayMs } from '@/lib/ingest/plan';

const MiB = 1024 * 1024;

describe('planUpload', () => {
  it('sends up to 16 MiB in one PUT and larger files in parts of at least 8 MiB', () => {
    expect(planUpload(16 * MiB)).toEqual({ mode: 'single', sizeBytes: 16 * MiB });
    expect(planUpload(16 * MiB + 1)).toMatchObject({ mode: 'multipart', partSize: 8 * MiB, partCount: 3 });
    expect(planUpload(1024 ** 3)).toMatchObject({ partSize: 8 * MiB, partCount: 128 });
  });

  it('never needs more than 10 000 parts, up to 5 TiB', () => {
    for (const size of [80 * 1024 * MiB, 1024 ** 4, 5 * 1024 ** 4]) {
      const p = planUpload(size);
      if (p.mode !== 'multipart') throw new Error('expected multipart');
      expect(p.partCount).toBeLessThanOrEqual(MAX_PARTS);
      expect(p.partSize % MiB).toBe(0);
      expect(p.partSize).toBeLessThanOrEqual(5 * 1024 * MiB);
    }
    expect(() => planUpload(5 * 1024 ** 4 + 1)).toThrow(RangeError);
    expect(() => planUpload(-1)).toThrow(RangeError);
  });

  it('cuts parts that cover the file exactly once', () => {
    const size = 50 * MiB + 123;
    const p = planUpload(size);
    if (p.mode !== 'multipart') throw new Error('expected multipart');
    let covered = 0;
    for (let n = 1; n <= p.partCount; n++) {
      const r = partRange(size, p.partSize, n);
      expect(r.start).toBe(covered);
      covered = r.end;
    }
    expect(covered).toBe(size);
    expect(() => partRange(size, p.partSize, p.partCount + 1)).toThrow(RangeError);
  });

  it('backs off exponentially with ±25 % jitter on a base capped at 30 s', () => {
    expect(retryDelayMs(1, () => 0.5)).toBe(500);
    expect(retryDelayMs(3, () => 0.5)).toBe(2000);
    expect(retryDelayMs(20, () => 1)).toBe(37500);
    expect(retryDelayMs(20, () => 0)).toBe(22500);
  });
});

describe('checkAgainstLog', () => {
  const entry = (over: Partial<Parameters<typeof checkAgainstLog>[0][number]>) => ({
    id: 1,
    notedAt: '2026-03-14T08:00:00Z',
    author: null,
    text: 'x',
    target: null,
    wavelengthNm: null,
    pulseEnergyUj: null,
    ellipticity: null,
    detectorVoltages: null,
    ...over,
  });
  const file = { target: 'He', wavelengthNm: 800, ellipticity: 0.87, startTime: '2026-03-14T09:30:00+01:00' };

  it('is quiet when the log agrees within tolerance', () => {
    expect(checkAgainstLog([entry({ target: 'he', wavelengthNm: 803, ellipticity: 0.88 })], file)).toEqual([]);
  });

  it('names each mismatch, using the entry noted before the file started', () => {
    const log = [
      entry({ id: 1, notedAt: '2026-03-14T08:00:00Z', target: 'Ar', wavelengthNm: 1300 }),
      entry({ id: 2, notedAt: '2026-03-14T10:00:00Z', target: 'He', wavelengthNm: 800 }),
    ];
    const m = checkAgainstLog(log, file);
    expect(m.map((x) => x.field)).toEqual(['target', 'wavelength']);
    expect(m[0]?.entryId).toBe(1);
    expect(m[1]?.sentence).toContain('1300 nm');
  });
});
