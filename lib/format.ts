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
