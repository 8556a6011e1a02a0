/**
 * Headers on every answer (pages, API, assets): OWASP ASVS 4.0 V14.4 (nosniff V14.4.4, Referrer-Policy V14.4.5,
 * framing V14.4.7) and the usual hardening. The pages' Content-Security-Policy carries a per-request nonce and is
 * set in proxy.ts; the API's answers are JSON or files and get a policy that allows nothing. Static assets get no
 * CSP, so that the module worker of the ingest pre-check runs under the page's rules and not an empty policy.
 */
const everywhere = [
  { key: 'X-Content-Type-Options', value: 'nosniff' },
  // The full address only within the app (the CSRF check reads it as a fallback); other sites see nothing.
  { key: 'Referrer-Policy', value: 'same-origin' },
  { key: 'X-Frame-Options', value: 'DENY' },
  { key: 'Cross-Origin-Opener-Policy', value: 'same-origin' },
  { key: 'Cross-Origin-Resource-Policy', value: 'same-origin' },
  {
    key: 'Permissions-Policy',
    value: 'camera=(), microphone=(), geolocation=(), payment=(), usb=(), serial=(), bluetooth=(), interest-cohort=()',
  },
];

/** @type {import('next').NextConfig} */
const nextConfig = {
  // Packages that must stay as plain Node modules on the server (native bindings, wasm, dynamic requires).
  serverExternalPackages: [
    'sequelize',
    'mariadb',
    'h5wasm',
    'h5wasm-plugins',
    'bullmq',
    'ioredis',
    'bcryptjs',
    'nodemailer',
    'rate-limiter-flexible',
  ],
  // `npm test` builds into its own folder (NEXT_DIST_DIR=.next-test) so a running dev build is left alone.
  distDir: process.env.NEXT_DIST_DIR || '.next',
  poweredByHeader: false,
  reactStrictMode: true,
  typedRoutes: false,
  // forbidden() + app/(app)/forbidden.tsx: pages a role may not use answer 403 (not 200) inside the app's frame.
  experimental: { authInterrupts: true },
  async headers() {
    return [
      { source: '/:path*', headers: everywhere },
      {
        source: '/api/:path*',
        headers: [{ key: 'Content-Security-Policy', value: "default-src 'none'; frame-ancestors 'none'; sandbox" }],
      },
    ];
  },
};

export default nextConfig;
