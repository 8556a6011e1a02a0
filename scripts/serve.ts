// `npm run serve` (and start.sh / test.sh): Lobeline's production HTTP server. It is Next's own request handler
// behind a plain node:http server whose only job is to set x-forwarded-for from the socket address before Next
// reads it (lib/auth/client-address.ts), so that the sign-in limits and the audit trail see the real client
// address and not a header the client wrote; it also answers 400 for a path that is not valid percent-encoding,
// which Next itself would answer with a 500. Usage: tsx scripts/serve.ts [-H host] [-p port]
import { createServer } from 'node:http';
import next from 'next';
import { forwardedForHeader, parseTrustedProxyHops } from '@/lib/auth/client-address';

function arg(names: string[], fallback: string): string {
  const argv = process.argv.slice(2);
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i] ?? '';
    for (const n of names) {
      if (a === n && argv[i + 1]) return argv[i + 1] as string;
      if (a.startsWith(`${n}=`)) return a.slice(n.length + 1);
    }
  }
  return fallback;
}

const hostname = arg(['-H', '--hostname'], '127.0.0.1');
const port = Number(arg(['-p', '--port'], process.env.PORT || '3000'));

const app = next({ dev: false, hostname, port, dir: process.cwd() });
const handle = app.getRequestHandler();

await app.prepare(); // loads .env files into process.env, like `next start`
const hops = parseTrustedProxyHops(process.env.TRUSTED_PROXY_HOPS);
if (hops === null) {
  console.error('TRUSTED_PROXY_HOPS must be a whole number from 0 to 10 (the reverse proxies in front of Lobeline).');
  process.exit(1);
}

/** A path Next cannot percent-decode (RFC 3986 §2.1) would fail inside Next with a 500: answer 400 here. */
function malformedPath(url: string | undefined): boolean {
  const path = (url ?? '/').split('?')[0] ?? '/';
  try {
    decodeURIComponent(path);
    return false;
  } catch {
    return true;
  }
}

const server = createServer((req, res) => {
  if (malformedPath(req.url)) {
    const api = (req.url ?? '').startsWith('/api/');
    const sentence = 'This address is not valid: it contains a broken percent-encoded character.';
    res.writeHead(400, {
      'content-type': api ? 'application/json; charset=utf-8' : 'text/plain; charset=utf-8',
      'cache-control': 'no-store',
      'x-content-type-options': 'nosniff',
      'content-security-policy': "default-src 'none'; frame-ancestors 'none'",
    });
    res.end(api ? JSON.stringify({ error: { code: 'bad_request:api', message: sentence } }) : `${sentence}\n`);
    return;
  }
  req.headers['x-forwarded-for'] = forwardedForHeader(
    req.headers['x-forwarded-for'],
    req.socket.remoteAddress ?? '',
    hops,
  );
  handle(req, res).catch((err: unknown) => {
    console.error('request failed', err);
    if (!res.headersSent) res.writeHead(500, { 'content-type': 'text/plain; charset=utf-8' });
    res.end('Something went wrong on our side.');
  });
});
server.listen(port, hostname, () => {
  console.log(`Lobeline listening on http://${hostname}:${port} (trusted proxies: ${hops})`);
});
for (const sig of ['SIGINT', 'SIGTERM'] as const) {
  process.on(sig, () => {
    server.close(() => process.exit(0));
    setTimeout(() => process.exit(0), 5000).unref();
  });
}
