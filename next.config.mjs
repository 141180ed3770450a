/**
 * Security headers on every response. Next's hydration uses inline scripts, so script-src keeps
 * 'unsafe-inline' (no third-party origin is allowed); everything else is locked to this origin,
 * and no page may be framed.
 */
const contentSecurityPolicy = [
  "default-src 'self'",
  "script-src 'self' 'unsafe-inline'",
  "style-src 'self' 'unsafe-inline'",
  "img-src 'self' data: blob:",
  "font-src 'self'",
  "connect-src 'self'",
  "object-src 'none'",
  "base-uri 'self'",
  "form-action 'self'",
  "frame-ancestors 'none'",
].join("; ");

const securityHeaders = [
  { key: "Content-Security-Policy", value: contentSecurityPolicy },
  { key: "X-Content-Type-Options", value: "nosniff" },
  { key: "Referrer-Policy", value: "strict-origin-when-cross-origin" },
  { key: "X-Frame-Options", value: "DENY" },
  { key: "Permissions-Policy", value: "camera=(), microphone=(), geolocation=()" },
];

/** @type {import('next').NextConfig} */
const nextConfig = {
  // Native and server-only packages stay out of the bundle and load from node_modules.
  serverExternalPackages: ["better-sqlite3", "@prisma/adapter-better-sqlite3", "@prisma/adapter-pg", "pg"],
  poweredByHeader: false,
  experimental: {
    // Uploads go through server actions; the upload use case enforces PHENOPOOL_MAX_UPLOAD_BYTES
    // itself with a clear message, so the transport limit only needs to sit above it.
    serverActions: { bodySizeLimit: "110mb" },
  },
  async headers() {
    return [{ source: "/:path*", headers: securityHeaders }];
  },
};

export default nextConfig;
