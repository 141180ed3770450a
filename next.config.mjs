/** @type {import('next').NextConfig} */
const nextConfig = {
  // Native and server-only packages stay out of the bundle and load from node_modules.
  serverExternalPackages: ["better-sqlite3", "@prisma/adapter-better-sqlite3", "@prisma/adapter-pg", "pg"],
  poweredByHeader: false,
  typedRoutes: false,
};

export default nextConfig;
