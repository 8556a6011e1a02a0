// The client address used by the sign-in limits and written to the audit trail.
//
// Lobeline is served by scripts/serve.ts, which rewrites `x-forwarded-for` on every request before Next sees it:
//   - TRUSTED_PROXY_HOPS=0 (the default, no reverse proxy in front): the header becomes the socket address alone,
//     so whatever a client sent in its own x-forwarded-for is thrown away;
//   - TRUSTED_PROXY_HOPS=n: the socket address is appended, as a proxy would do, and the client address is the
//     entry n places before it (the address the outermost trusted proxy saw).
// clientAddressFromHeaders reads that header back with the same setting, so a header the client chooses never
// decides the address. (De-facto convention of x-forwarded-for: each proxy appends the address of its peer.)

/** Accepted values of TRUSTED_PROXY_HOPS: a whole number from 0 to 10; anything else is refused by lib/env.ts. */
export function parseTrustedProxyHops(raw: string | undefined): number | null {
  const v = (raw ?? '').trim();
  if (v === '') return 0;
  if (!/^\d{1,2}$/.test(v)) return null;
  const n = Number(v);
  return n <= 10 ? n : null;
}

/** The configured number of trusted reverse proxies (0 when unset; an invalid value also counts as 0 here). */
export function trustedProxyHops(): number {
  return parseTrustedProxyHops(process.env.TRUSTED_PROXY_HOPS) ?? 0;
}

/** What scripts/serve.ts puts into x-forwarded-for for a request that arrived on a socket from `socketAddress`. */
export function forwardedForHeader(
  incoming: string | string[] | undefined,
  socketAddress: string,
  hops: number,
): string {
  const peer = socketAddress || 'unknown';
  if (hops === 0) return peer;
  const before = (Array.isArray(incoming) ? incoming.join(',') : (incoming ?? ''))
    .split(',')
    .map((s) => s.trim())
    .filter(Boolean);
  return [...before, peer].join(', ');
}

/** The client address from an x-forwarded-for header written by forwardedForHeader with the same `hops`. */
export function clientAddressFromForwardedFor(header: string | undefined | null, hops: number): string {
  const entries = (header ?? '')
    .split(',')
    .map((s) => s.trim())
    .filter(Boolean);
  if (entries.length === 0) return 'unknown';
  const chosen = entries[Math.max(0, entries.length - 1 - hops)] ?? 'unknown';
  return normalizeAddress(chosen).slice(0, 64);
}

/** `::ffff:127.0.0.1` (an IPv4 peer on a dual-stack socket) is written as `127.0.0.1`. */
function normalizeAddress(a: string): string {
  return a.startsWith('::ffff:') && a.includes('.') ? a.slice(7) : a;
}

export function clientAddressFromHeaders(headers: Headers | Record<string, unknown> | undefined): string {
  let v: string | undefined;
  if (headers instanceof Headers) v = headers.get('x-forwarded-for') ?? undefined;
  else if (headers) {
    const raw = headers['x-forwarded-for'];
    v = Array.isArray(raw) ? raw.map(String).join(',') : typeof raw === 'string' ? raw : undefined;
  }
  return clientAddressFromForwardedFor(v, trustedProxyHops());
}
