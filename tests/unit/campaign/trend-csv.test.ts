/**
 * The campaign trend's CSV export follows RFC 4180 (section 2: records end in CRLF; a field holding a comma, a double
 * quote or a line break is enclosed in double quotes, and a double quote inside is doubled) and keeps full precision.
 * The rows are parsed back here with a small reader written from the RFC's grammar, not with the writer's code.
 */
import { describe, expect, it } from 'vitest';
import { trendCsv } from '@/components/campaign/trend-export';
import type { TrendPointDto } from '@/lib/db/queries/scans';

/** RFC 4180 reader: fields, quoted fields with "" escapes, CRLF record ends. */
function readCsv(text: string): string[][] {
  const rows: string[][] = [];
  let row: string[] = [];
  let field = '';
  let i = 0;
  let quoted = false;
  while (i < text.length) {
    const c = text[i] as string;
    if (quoted) {
      if (c === '"' && text[i + 1] === '"') {
        field += '"';
        i += 2;
        continue;
      }
      if (c === '"') quoted = false;
      else field += c;
      i++;
      continue;
    }
    if (c === '"') quoted = true;
    else if (c === ',') {
      row.push(field);
      field = '';
    } else if (c === '\r' && text[i + 1] === '\n') {
      row.push(field);
      rows.push(row);
      row = [];
      field = '';
      i++;
    } else field += c;
    i++;
  }
  return rows;
}

const point = (over: Partial<TrendPointDto>): TrendPointDto => ({
  scanId: 7,
  scanTitle: 'He, ε = 0.87',
  resultId: 70,
  stepIndex: 0,
  value: 2.5e14,
  stepQuantity: 'intensity',
  offsetDeg: 6.123456789,
  offsetErrDeg: 0.031,
  radiusAu: 1.2,
  radiusErrAu: 0.01,
  intensityWcm2: 2.41e14,
  intensityErrWcm2: 3e12,
  transverseShiftAu: null,
  flagged: false,
  ...over,
});

describe('trendCsv', () => {
  const text = trendCsv(
    [point({}), point({ stepIndex: 1, scanTitle: 'the "good" one\nsecond line', flagged: true })],
    'step',
  );
  const rows = readCsv(text);
  it('ends every record with CRLF', () => {
    expect(text.endsWith('\r\n')).toBe(true);
    expect(text.replace(/\r\n/g, '').includes('\r')).toBe(false);
  });
  it('quotes commas, quotes and line breaks so that the fields read back unchanged', () => {
    const header = rows[1] as string[];
    expect(rows[0]?.[0]).toMatch(/^# Lobeline campaign trend/);
    const t = header.indexOf('scan_title');
    expect(rows[2]?.[t]).toBe('He, ε = 0.87');
    expect(rows[3]?.[t]).toBe('the "good" one\nsecond line');
    expect(rows.slice(1).every((r) => r.length === header.length)).toBe(true);
  });
  it('keeps full precision and leaves missing values empty', () => {
    const header = rows[1] as string[];
    expect(Number(rows[2]?.[header.indexOf('offset_deg')])).toBe(6.123456789);
    expect(Number(rows[2]?.[header.indexOf('step_value')])).toBe(2.5e14);
    expect(rows[2]?.[header.indexOf('transverse_shift_au')]).toBe('');
    expect(rows[3]?.[header.indexOf('flagged')]).toBe('true');
  });
});
