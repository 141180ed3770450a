import { z } from "zod";
import type { Db } from "../db/client";
import { readEnv } from "../config/env";
import { AppError } from "../errors/app-error";
import { columnMappingSchema } from "../ingest/column-mapping";
import { delimiterSchema } from "../ingest/read-upload-table";
import { submissionKindSchema } from "../ingest/schemas/vocabulary";
import { siteCodeSchema } from "../network/site-input";
import { loadRememberedMapping } from "./column-mapping-store";
import type { UploadLimits, UploadScanSettings } from "./scan-upload";

/** How to read an uploaded file: which site and kind it is for, and what the detection should not guess. */
export const uploadRequestSchema = z.object({
  siteCode: siteCodeSchema,
  kind: submissionKindSchema,
  /** Cell delimiter of a CSV/TSV file; detected from its first lines when absent. */
  delimiter: delimiterSchema.optional(),
  /** The file writes decimals with a comma (7,5). Never guessed. */
  decimalComma: z.boolean().default(false),
  /** Sheet of an .xlsx workbook; the first when absent. */
  sheet: z.string().trim().min(1).max(200).optional(),
  /** PhenoPool field -> the file's heading, over what is proposed (remembered, then matched by name). */
  mapping: columnMappingSchema.optional(),
});
export type UploadRequest = z.input<typeof uploadRequestSchema>;
export type ParsedUploadRequest = z.output<typeof uploadRequestSchema>;

/** Accepting also names what the user saw in the preview, so a change since then is refused. */
export const acceptUploadRequestSchema = uploadRequestSchema.extend({
  /** SHA-256 of the previewed file: refuse if the bytes differ. */
  expectedSha256: z.string().regex(/^[0-9a-f]{64}$/, "must be 64 lower-case hex digits").optional(),
  /** The current submission the preview's diff was against (null: none); refuse if it changed. */
  expectedCurrentSubmissionId: z.number().int().positive().nullable().optional(),
});
export type AcceptUploadRequest = z.input<typeof acceptUploadRequestSchema>;

/** Problems listed in full by default (all are counted). */
export const DEFAULT_LISTED_PROBLEMS = 10_000;

/** Upload limits from the environment (PHENOPOOL_MAX_UPLOAD_BYTES, PHENOPOOL_MAX_UPLOAD_ROWS). */
export function uploadLimitsFromEnv(): UploadLimits {
  const env = readEnv();
  return { maxBytes: env.PHENOPOOL_MAX_UPLOAD_BYTES, maxRows: env.PHENOPOOL_MAX_UPLOAD_ROWS, maxListedProblems: DEFAULT_LISTED_PROBLEMS };
}

export function parseUploadRequest<S extends z.ZodType>(schema: S, input: unknown): z.output<S> {
  const parsed = schema.safeParse(input);
  if (parsed.success) return parsed.data;
  throw new AppError(
    "invalid_input",
    "the upload request is not valid",
    parsed.error.issues.map((issue) => ({ field: issue.path.join(".") || "(request)", message: issue.message })),
  );
}

export interface UploadTarget {
  site: { id: number; code: string; dateConvention: "jan1" | "apr1" };
  current: { id: number; sha256: string; rowCount: number } | null;
  settings: UploadScanSettings;
}

/** The site, its current submission of the kind, and everything a scan of the file needs. */
export async function loadUploadTarget(db: Db, request: ParsedUploadRequest, limits: UploadLimits): Promise<UploadTarget> {
  const site = await db.site.findUnique({ where: { code: request.siteCode }, select: { id: true, code: true, dateConvention: true } });
  if (!site) {
    throw new AppError("not_found", `site code ${request.siteCode} is not in this network`, [
      { field: "siteCode", message: `site code ${request.siteCode} is not in this network`, value: request.siteCode },
    ]);
  }
  const [current, sites, remembered] = await Promise.all([
    db.submission.findFirst({ where: { siteId: site.id, kind: request.kind, status: "accepted" }, select: { id: true, sha256: true, rowCount: true } }),
    db.site.findMany({ select: { code: true } }),
    loadRememberedMapping(db, site.id, request.kind),
  ]);
  return {
    site,
    current,
    settings: {
      kind: request.kind,
      siteCode: site.code,
      convention: site.dateConvention,
      networkSiteCodes: new Set(sites.map((s) => s.code)),
      decimalComma: request.decimalComma,
      table: { ...(request.delimiter ? { delimiter: request.delimiter } : {}), ...(request.sheet ? { sheet: request.sheet } : {}) },
      mapping: request.mapping ?? null,
      remembered,
      limits,
    },
  };
}
