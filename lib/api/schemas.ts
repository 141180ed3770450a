import { z } from "zod";
import { ERROR_CODES } from "../errors/app-error";
import {
  estimateLevelSchema,
  estimateScaleSchema,
  estimateTermSchema,
  linkFunctionSchema,
  outcomeSchema,
  submissionKindSchema,
} from "../ingest/schemas/vocabulary";
import { analysisSpecificationSchema } from "../analyses/specification";
import { dateConventionSchema } from "../network/site-input";
import { moderatorKindSchema } from "../network/moderator-input";
import { submissionStatusSchema } from "../submissions/list-submissions";

/**
 * The JSON replies of the API, as they arrive at a client (timestamps as ISO 8601 text). The
 * OpenAPI document's response components are generated from these; the contract tests parse every
 * reply with them.
 */
const timestamp = z.iso.datetime({ offset: true }).describe("ISO 8601 date-time, UTC.");
const count = z.number().int().min(0);

export const fieldErrorSchema = z.object({
  field: z.string().describe("Dotted path or column name; query.<name> and path.<name> for URL parameters."),
  message: z.string(),
  row: z.number().int().min(1).optional().describe("1-based data row of an uploaded file."),
  file: z.string().optional(),
  value: z.string().optional(),
});

export const errorBodySchema = z.object({
  error: z.object({ code: z.enum(ERROR_CODES), message: z.string(), fieldErrors: z.array(fieldErrorSchema) }),
});

export const siteSummarySchema = z.object({
  code: z.string(),
  name: z.string(),
  speciesScientific: z.string(),
  speciesCommon: z.string(),
  latitude: z.number(),
  longitude: z.number(),
  firstYear: z.number().int(),
  lastYear: z.number().int(),
  broodCount: count.describe("Brood records in the site's current submission."),
  recordYears: z.object({ first: z.number().int(), last: z.number().int() }).nullable(),
  estimateCount: count,
});

export const siteListSchema = z.object({
  items: z.array(siteSummarySchema),
  totals: z.object({ sites: count, species: count, broods: count, estimates: count }),
});

export const siteSchema = z.object({
  code: z.string(),
  name: z.string(),
  species: z.object({ scientificName: z.string(), commonName: z.string() }),
  latitude: z.number().describe("Decimal degrees, WGS84."),
  longitude: z.number().describe("Decimal degrees, WGS84."),
  elevationM: z.number().nullable().describe("Metres above sea level."),
  habitat: z.string().nullable(),
  firstYear: z.number().int(),
  lastYear: z.number().int(),
  dateConvention: dateConventionSchema,
  leadUser: z.string().nullable().describe("Display name of the site lead."),
  notes: z.string().nullable(),
  createdAt: timestamp,
  updatedAt: timestamp,
});

export const moderatorSchema = z.object({
  key: z.string(),
  label: z.string(),
  unit: z.string().nullable(),
  kind: moderatorKindSchema,
  description: z.string(),
  builtIn: z.boolean(),
  siteCount: count,
});
export const moderatorListSchema = z.object({ items: z.array(moderatorSchema) });

export const moderatorValueSchema = z.object({
  siteCode: z.string(),
  moderatorKey: z.string(),
  numericValue: z.number().nullable(),
  categoricalValue: z.string().nullable(),
  standardError: z.number().nullable(),
  source: z.enum(["entered", "computed"]),
  method: z.string().nullable(),
});

export const submissionSchema = z.object({
  id: z.number().int(),
  siteCode: z.string(),
  kind: submissionKindSchema,
  fileName: z.string(),
  sha256: z.string().regex(/^[0-9a-f]{64}$/),
  rowCount: count,
  submittedBy: z.string().nullable(),
  submittedAt: timestamp,
  status: submissionStatusSchema,
  supersedesId: z.number().int().nullable(),
  supersededById: z.number().int().nullable(),
});
export const submissionListSchema = z.object({ items: z.array(submissionSchema) });

export const uploadWarningSchema = z.object({
  code: z.enum(["unused_columns", "unheaded_columns"]).describe("unused_columns: headings no field is mapped to; unheaded_columns: values under an empty heading."),
  message: z.string(),
});

export const submissionWriteResultSchema = z.object({
  submission: submissionSchema,
  supersededId: z.number().int().nullable().describe("The submission this one replaced as the site's current one of its kind."),
  unchanged: z.boolean().describe("True when the rows equal the current submission's: nothing was written (HTTP 200 instead of 201)."),
  recomputeJobId: z.number().int().nullable().describe("The queued recomputation of the site's estimates, if the submission calls for one."),
  unusedHeadings: z
    .array(z.string())
    .optional()
    .describe("File uploads only: the file's headings that no field is mapped to. Their columns were not read or stored; map a field to one (the form's mapping) to have it read."),
  warnings: z.array(uploadWarningSchema).optional().describe("File uploads only: the columns that were not read, in words, with how to have them read."),
});

export const withdrawResultSchema = z.object({
  submission: submissionSchema.describe("The withdrawn submission (status withdrawn)."),
  reinstatedId: z.number().int().nullable().describe("The earlier submission made current again, when the withdrawn one was the site's current one."),
  recomputeJobId: z.number().int().nullable().describe("The queued recomputation of the site's estimates, if the change calls for one."),
});

export const jobSchema = z.object({
  id: z.number().int(),
  kind: z.string(),
  status: z.enum(["queued", "running", "succeeded", "failed", "cancelled"]),
  progress: z.number().min(0).max(1),
  message: z.string().nullable(),
  result: z.unknown(),
  siteId: z.number().int().nullable(),
  createdAt: timestamp,
  startedAt: timestamp.nullable(),
  finishedAt: timestamp.nullable(),
});

export const restoreResultSchema = z.object({
  submissionId: z.number().int().describe("The new current submission: a copy of the restored one's rows."),
  restoredFromId: z.number().int(),
  supersededId: z.number().int().nullable(),
  rowCount: count,
  job: jobSchema.nullable().describe("The queued recomputation of the site's estimates, if any."),
});

export const broodRecordSchema = z.object({
  id: z.number().int(),
  siteCode: z.string(),
  species: z.string().describe("Scientific name."),
  year: z.number().int(),
  femaleId: z.string(),
  layDateDoy: z.number().int().describe("First egg date, day of year (1 = 1 January)."),
  clutchSize: z.number().int(),
  hatchDateDoy: z.number().int().nullable().describe("Day of year (1 = 1 January)."),
  fledglings: z.number().int(),
  recruits: z.number().int(),
  submissionId: z.number().int(),
});

export const estimateSchema = z.object({
  id: z.number().int(),
  siteCode: z.string(),
  species: z.string().describe("Scientific name."),
  outcome: outcomeSchema,
  level: estimateLevelSchema,
  term: estimateTermSchema,
  year: z.number().int().nullable().describe("Empty for a site-level estimate."),
  value: z.number(),
  standardError: z.number(),
  n: z.number().int(),
  scale: estimateScaleSchema,
  link: linkFunctionSchema,
  source: z.enum(["computed", "uploaded"]),
  method: z.string(),
  submissionId: z.number().int().nullable(),
  createdAt: timestamp,
});

const pageOf = <T extends z.ZodType>(item: T) =>
  z.object({ total: count.describe("Rows matching the filter."), limit: z.number().int(), offset: z.number().int(), items: z.array(item) });
export const broodRecordPageSchema = pageOf(broodRecordSchema);
export const estimatePageSchema = pageOf(estimateSchema);

export const siteDetailSchema = z.object({
  site: siteSchema,
  moderators: z.array(
    z.object({
      key: z.string(),
      label: z.string(),
      unit: z.string().nullable(),
      numericValue: z.number().nullable(),
      categoricalValue: z.string().nullable(),
      standardError: z.number().nullable(),
      source: z.enum(["entered", "computed"]),
      method: z.string().nullable(),
    }),
  ),
  siteYears: z.array(
    z.object({
      year: z.number().int(),
      foodPeakDoy: z.number().nullable().describe("Day of year (1 = 1 January)."),
      foodPeakSe: z.number().nullable().describe("Days."),
      meanSpringTempC: z.number().nullable().describe("Degrees Celsius."),
      broodCount: z.number().int().nullable(),
      submissionId: z.number().int(),
    }),
  ),
  estimates: z.array(estimateSchema),
  estimatesWithheld: z.string().nullable().describe("Why `estimates` is empty although the site may have some: the network does not show pooled results to the caller. Null when they are shown."),
  broodsByYear: z.array(z.object({ year: z.number().int(), broods: count })),
});

/** Specification as stored: every default filled in (a copy of the request schema, described as a reply). */
export const storedSpecificationSchema = z.object(analysisSpecificationSchema.shape).describe("The specification as stored, every default filled in.");

export const analysisRunSummarySchema = z.object({ id: z.number().int(), createdAt: timestamp, engineVersion: z.string(), dataFingerprint: z.string() });

export const analysisSchema = z.object({
  id: z.number().int(),
  name: z.string(),
  specification: storedSpecificationSchema,
  createdBy: z.string().nullable(),
  createdAt: timestamp,
  updatedAt: timestamp,
  runs: z.array(analysisRunSummarySchema).describe("Newest first."),
});
export const analysisListSchema = z.object({ items: z.array(analysisSchema) });

export const analysisRunSchema = z.object({
  id: z.number().int(),
  analysisId: z.number().int(),
  createdAt: timestamp,
  engineVersion: z.string().describe("PhenoPool version that fitted the run."),
  dataFingerprint: z.string().describe("SHA-256 over the submissions, estimates and moderator values the run read."),
  currentDataFingerprint: z.string().nullable().describe("The same fingerprint over today's data; null when the analysis can no longer select data."),
  dataChanged: z.boolean(),
  result: z.record(z.string(), z.unknown()).describe("The stored result: specification, selected studies and the fitted model."),
});

export const auditEntrySchema = z.object({
  id: z.number().int(),
  at: timestamp,
  actorUserId: z.number().int().nullable(),
  actorLabel: z.string().describe("Who acted, as named when they did."),
  action: z.string(),
  entityType: z.string(),
  entityId: z.string().nullable(),
  before: z.unknown().describe("Summary of the changed thing before the change (null for a creation)."),
  after: z.unknown().describe("Summary after the change."),
  sha256: z.string().nullable().describe("SHA-256 of an uploaded file."),
});

export const openApiDocumentSchema = z.looseObject({ openapi: z.string(), info: z.looseObject({ title: z.string(), version: z.string() }), paths: z.record(z.string(), z.unknown()) });

/** Names of the response components in the OpenAPI document. */
export const RESPONSE_COMPONENTS: Record<string, z.ZodType> = {
  ErrorBody: errorBodySchema,
  SiteSummary: siteSummarySchema,
  SiteList: siteListSchema,
  Site: siteSchema,
  SiteDetail: siteDetailSchema,
  Moderator: moderatorSchema,
  ModeratorList: moderatorListSchema,
  ModeratorValue: moderatorValueSchema,
  Submission: submissionSchema,
  SubmissionList: submissionListSchema,
  SubmissionWriteResult: submissionWriteResultSchema,
  UploadWarning: uploadWarningSchema,
  Job: jobSchema,
  RestoreResult: restoreResultSchema,
  WithdrawResult: withdrawResultSchema,
  AuditEntry: auditEntrySchema,
  BroodRecord: broodRecordSchema,
  BroodRecordPage: broodRecordPageSchema,
  Estimate: estimateSchema,
  EstimatePage: estimatePageSchema,
  Analysis: analysisSchema,
  AnalysisList: analysisListSchema,
  StoredAnalysisSpecification: storedSpecificationSchema,
  AnalysisRunSummary: analysisRunSummarySchema,
  AnalysisRun: analysisRunSchema,
};
