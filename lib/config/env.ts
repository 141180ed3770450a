import { z } from "zod";

/** The embedded database used when DATABASE_URL is not set. */
export const DEFAULT_DATABASE_URL = "file:./data/phenopool.db";

const envSchema = z.object({
  DATABASE_URL: z
    .string()
    .trim()
    .min(1)
    .default(DEFAULT_DATABASE_URL)
    .refine((url) => /^(file:|postgres:\/\/|postgresql:\/\/)/.test(url), {
      message: "DATABASE_URL must start with file: (SQLite) or postgres:// / postgresql:// (PostgreSQL)",
    }),
});

export type AppEnv = z.infer<typeof envSchema>;

/**
 * Parses the process environment once. Throws with every problem named when a variable is malformed.
 */
export function readEnv(source: NodeJS.ProcessEnv = process.env): AppEnv {
  const parsed = envSchema.safeParse({ DATABASE_URL: source.DATABASE_URL || undefined });
  if (!parsed.success) {
    const problems = parsed.error.issues.map((issue) => `${issue.path.join(".")}: ${issue.message}`);
    throw new Error(`Invalid environment: ${problems.join("; ")}`);
  }
  return parsed.data;
}
