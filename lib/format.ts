// Shared display text for sizes and moments, used by server and client components and by the shift receipt.
// Moments are always written in UTC with an explicit "UTC" so server- and client-rendered text are identical.

/** Byte counts in binary units: `512 B`, `178.1 KiB`, `2.40 MiB`. */
export function formatBytes(n: number | null | undefined): string {
  if (n == null || !Number.isFinite(n)) return '—';
  const units = ['B', 'KiB', 'MiB', 'GiB', 'TiB'];
  let v = n;
  let i = 0;
  while (v >= 1024 && i < units.length - 1) {
    v /= 1024;
    i++;
  }
  return i === 0 ? `${n} B` : `${v.toFixed(v >= 100 ? 0 : v >= 10 ? 1 : 2)} ${units[i]}`;
}

const DATE_TIME = new Intl.DateTimeFormat('en-GB', {
  day: 'numeric',
  month: 'short',
  year: 'numeric',
  hour: '2-digit',
  minute: '2-digit',
  hourCycle: 'h23',
  timeZone: 'UTC',
});

const DAY = new Intl.DateTimeFormat('en-GB', { day: 'numeric', month: 'short', year: 'numeric', timeZone: 'UTC' });

function toDate(value: string | Date | null | undefined): Date | null {
  if (value == null || value === '') return null;
  const d = value instanceof Date ? value : new Date(value);
  return Number.isNaN(d.getTime()) ? null : d;
}

/** `2 Dec 2026, 06:44 UTC`; `—` for a missing or unreadable moment. */
export function formatDateTime(value: string | Date | null | undefined): string {
  const d = toDate(value);
  return d ? `${DATE_TIME.format(d)} UTC` : '—';
}

/** `2 Dec 2026` (the UTC calendar day); `—` for a missing or unreadable moment. */
export function formatDay(value: string | Date | null | undefined): string {
  const d = toDate(value);
  return d ? DAY.format(d) : '—';
}

const SUPERSCRIPT: Record<string, string> = {
  '0': '⁰',
  '1': '¹',
  '2': '²',
  '3': '³',
  '4': '⁴',
  '5': '⁵',
  '6': '⁶',
  '7': '⁷',
  '8': '⁸',
  '9': '⁹',
  '-': '⁻',
};

/**
 * Number text for people (tables, axes, messages): `2×10¹⁴`, `2.5×10⁻⁴`, `0.012`, `1250`. Values of 10⁵ and more,
 * or below 10⁻³, are written in scientific form with a real power of ten, never as `2e14`; `digits` significant
 * digits, trailing zeros dropped; `—` for a missing or non-finite value. Machine formats (CSV, JSON) keep plain
 * numbers and do not use this.
 */
export function formatNumber(v: number | null | undefined, digits = 3): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '—';
  const a = Math.abs(v);
  if (a !== 0 && (a >= 1e5 || a < 1e-3)) {
    const [m, e] = v.toExponential(Math.max(0, digits - 1)).split('e');
    const mantissa = Number(m);
    const exponent = String(Number(e))
      .split('')
      .map((ch) => SUPERSCRIPT[ch] ?? ch)
      .join('');
    return `${mantissa}×10${exponent}`;
  }
  return String(Number(v.toPrecision(digits)));
}
