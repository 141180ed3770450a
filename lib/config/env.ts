import { z } from "zod";

/** The embedded database used when DATABASE_URL is not set. */
export const DEFAULT_DATABASE_URL = "file:./data/phenopool.db";
/** Largest upload accepted by default: 100 MiB. */
export const DEFAULT_MAX_UPLOAD_BYTES = 100 * 1024 * 1024;
/** Most data rows an upload may have by default. */
export const DEFAULT_MAX_UPLOAD_ROWS = 2_000_000;
/** Largest JSON request body the API reads by default: 64 MiB (a brood-record submission of ~200 000 rows). */
export const DEFAULT_MAX_JSON_BODY_BYTES = 64 * 1024 * 1024;

/** A positive whole number given as text (e.g. "104857600"). */
const positiveWholeNumber = (name: string) =>
  z
    .string()
    .trim()
    .regex(/^\d+$/, `${name} must be a whole number`)
    .transform(Number)
    .refine((n) => n > 0 && Number.isSafeInteger(n), `${name} must be a positive whole number`);

const envSchema = z.object({
  DATABASE_URL: z
    .string()
    .trim()
    .min(1)
    .default(DEFAULT_DATABASE_URL)
    .refine((url) => /^(file:|postgres:\/\/|postgresql:\/\/)/.test(url), {
      message: "DATABASE_URL must start with file: (SQLite) or postgres:// / postgresql:// (PostgreSQL)",
    }),
  /** Uploads larger than this many bytes are refused while they stream in. */
  PHENOPOOL_MAX_UPLOAD_BYTES: positiveWholeNumber("PHENOPOOL_MAX_UPLOAD_BYTES").default(DEFAULT_MAX_UPLOAD_BYTES),
  /** Uploads with more data rows than this are refused. */
  PHENOPOOL_MAX_UPLOAD_ROWS: positiveWholeNumber("PHENOPOOL_MAX_UPLOAD_ROWS").default(DEFAULT_MAX_UPLOAD_ROWS),
  /** JSON request bodies larger than this many bytes are refused (413) while they stream in. */
  PHENOPOOL_MAX_JSON_BODY_BYTES: positiveWholeNumber("PHENOPOOL_MAX_JSON_BODY_BYTES").default(DEFAULT_MAX_JSON_BODY_BYTES),
});

export type AppEnv = z.infer<typeof envSchema>;

/**
 * Parses the process environment once. Throws with every problem named when a variable is malformed.
 */
export function readEnv(source: NodeJS.ProcessEnv = process.env): AppEnv {
  const parsed = envSchema.safeParse({
    DATABASE_URL: source.DATABASE_URL || undefined,
    PHENOPOOL_MAX_UPLOAD_BYTES: source.PHENOPOOL_MAX_UPLOAD_BYTES || undefined,
    PHENOPOOL_MAX_UPLOAD_ROWS: source.PHENOPOOL_MAX_UPLOAD_ROWS || undefined,
    PHENOPOOL_MAX_JSON_BODY_BYTES: source.PHENOPOOL_MAX_JSON_BODY_BYTES || undefined,
  });
  if (!parsed.success) {
    const problems = parsed.error.issues.map((issue) => `${issue.path.join(".")}: ${issue.message}`);
    throw new Error(`Invalid environment: ${problems.join("; ")}`);
  }
  return parsed.data;
}
