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
  ],
  // `npm test` builds into its own folder (NEXT_DIST_DIR=.next-test) so a running dev build is left alone.
  distDir: process.env.NEXT_DIST_DIR || '.next',
  poweredByHeader: false,
  reactStrictMode: true,
  typedRoutes: false,
  // forbidden() + app/(app)/forbidden.tsx: pages a role may not use answer 403 (not 200) inside the app's frame.
  experimental: { authInterrupts: true },
};

export default nextConfig;
