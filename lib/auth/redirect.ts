// Where a page may send the browser after signing in: only a path of the app's own origin. The candidate is
// parsed with the WHATWG URL parser (the one browsers use) against the app's origin, so every spelling that a
// browser would read as another host (`//evil`, `/\evil`, `/<TAB>/evil`, `https://evil`) is recognised as such;
// a path whose percent-decoding starts with `//` or `/\` or holds a control character is refused too, and text
// that is not a URL or not valid percent-encoding (RFC 3986 §2.1) is "malformed" (the pages answer 400).
// Pure: used by proxy.ts, next-auth's redirect callback and the sign-in form in the browser.

export type RedirectCheck = { ok: true; path: string } | { ok: false; reason: 'foreign' | 'malformed' };

// biome-ignore lint/suspicious/noControlCharactersInRegex: control characters are what this looks for
const CONTROL = /[\u0000-\u001f\u007f]/;

export function checkRedirectTarget(raw: string, appOrigin: string): RedirectCheck {
  if (raw.length > 2048) return { ok: false, reason: 'malformed' };
  try {
    decodeURIComponent(raw);
  } catch {
    return { ok: false, reason: 'malformed' };
  }
  let url: URL;
  let origin: string;
  try {
    origin = new URL(appOrigin).origin;
    url = new URL(raw, `${origin}/`);
  } catch {
    return { ok: false, reason: 'malformed' };
  }
  if (url.origin !== origin || url.username || url.password) return { ok: false, reason: 'foreign' };
  const path = `${url.pathname}${url.search}${url.hash}`;
  let decodedPath: string;
  try {
    decodedPath = decodeURIComponent(url.pathname);
  } catch {
    return { ok: false, reason: 'malformed' };
  }
  if (/^\/[/\\]/.test(path) || /^\/[/\\]/.test(decodedPath) || CONTROL.test(decodedPath)) {
    return { ok: false, reason: 'foreign' };
  }
  return { ok: true, path };
}

/** The path to go to after signing in: the checked target, or home. */
export function safeNextPath(raw: string | null | undefined, appOrigin: string): string {
  if (!raw) return '/';
  const r = checkRedirectTarget(raw, appOrigin);
  if (!r.ok) return '/';
  // Back to the sign-in page itself would loop: home instead. (next-auth's own redirects, e.g. to
  // /sign-in?signedOut=1 after signing out, go through checkRedirectTarget and keep theirs.)
  const pathname = r.path.split(/[?#]/)[0] ?? '';
  return pathname === '/sign-in' || pathname.startsWith('/sign-in/') ? '/' : r.path;
}
