/** @type {import('next').NextConfig} */
const nextConfig = {
  // Packages that must stay as plain Node modules on the server (native bindings, wasm, dynamic requires).
  serverExternalPackages: ['sequelize', 'mariadb', 'h5wasm', 'h5wasm-plugins', 'bullmq', 'ioredis', 'bcryptjs', 'nodemailer'],
  poweredByHeader: false,
  reactStrictMode: true,
  typedRoutes: false,
};

export default nextConfig;
