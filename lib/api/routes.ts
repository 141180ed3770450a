import { z } from "zod";
import { defineRoute, type RouteDefinition } from "./route-definition";
import * as out from "./schemas";
import { siteCodeSchema, siteInputSchema } from "../network/site-input";
import { moderatorInputSchema, moderatorKeySchema, moderatorValueInputSchema } from "../network/moderator-input";
import { broodRecordFilterSchema, estimateFilterSchema, pageSchema } from "../network/record-filters";
import { submissionFilterSchema } from "../submissions/list-submissions";
import { restoreSubmissionRequestSchema } from "../submissions/restore-submission";
import { jsonSubmissionSchema } from "../submissions/submit-json-rows";
import { uploadFormSchema } from "../submissions/upload-form";
import { analysisSpecificationSchema } from "../analyses/specification";

/**
 * Every route of the JSON API (/api/v1). Each app/api/v1/.../route.ts handler is built from one of
 * these (handleRoute), the OpenAPI document lists exactly these, and a test checks that the route
 * files on disk and this list agree.
 */
/** Database ids are 32-bit integers on both engines. */
const id = (what: string) =>
  z.coerce.number().int(`${what} id must be a whole number`).positive(`${what} id must be positive`).max(2_147_483_647, `no ${what} has so large an id`);
const siteParams = z.object({ code: siteCodeSchema });
const exportFormat = { format: z.enum(["csv", "json"]).default("csv").describe("csv (default) or json.") };

export const apiRoutes = {
  openApi: defineRoute({
    operationId: "getOpenApiDocument",
    method: "GET",
    path: "/api/v1/openapi.json",
    tag: "meta",
    summary: "This API described as an OpenAPI 3.1 document",
    response: { status: 200, description: "The OpenAPI document.", json: out.openApiDocumentSchema },
    errors: [],
  }),
  listSites: defineRoute({
    operationId: "listSites",
    method: "GET",
    path: "/api/v1/sites",
    tag: "sites",
    summary: "Every site with its species, position and counts of current data",
    response: { status: 200, description: "The sites, by code, and network totals.", json: out.siteListSchema },
    errors: [],
  }),
  createSite: defineRoute({
    operationId: "createSite",
    method: "POST",
    path: "/api/v1/sites",
    tag: "sites",
    summary: "Add a study site (its species is created on first use)",
    body: siteInputSchema,
    response: { status: 201, description: "The new site.", json: out.siteSchema },
    errors: ["conflict"],
  }),
  getSite: defineRoute({
    operationId: "getSite",
    method: "GET",
    path: "/api/v1/sites/{code}",
    tag: "sites",
    summary: "One site with its moderator values, current site-year covariates and current estimates",
    params: siteParams,
    response: { status: 200, description: "The site.", json: out.siteDetailSchema },
    errors: ["not_found"],
  }),
  setModeratorValue: defineRoute({
    operationId: "setModeratorValue",
    method: "PUT",
    path: "/api/v1/sites/{code}/moderators/{key}",
    tag: "moderators",
    summary: "Set one site's value of a moderator",
    params: z.object({ code: siteCodeSchema, key: moderatorKeySchema }),
    body: moderatorValueInputSchema,
    response: { status: 200, description: "The stored value.", json: out.moderatorValueSchema },
    errors: ["not_found"],
  }),
  listModerators: defineRoute({
    operationId: "listModerators",
    method: "GET",
    path: "/api/v1/moderators",
    tag: "moderators",
    summary: "Every site-level moderator (latitude is built in)",
    response: { status: 200, description: "The moderators, latitude first.", json: out.moderatorListSchema },
    errors: [],
  }),
  createModerator: defineRoute({
    operationId: "createModerator",
    method: "POST",
    path: "/api/v1/moderators",
    tag: "moderators",
    summary: "Add a site-level moderator for meta-regression",
    body: moderatorInputSchema,
    response: { status: 201, description: "The new moderator.", json: out.moderatorSchema },
    errors: ["conflict"],
  }),
  listSubmissions: defineRoute({
    operationId: "listSubmissions",
    method: "GET",
    path: "/api/v1/submissions",
    tag: "submissions",
    summary: "Submissions (current and superseded), newest first",
    query: submissionFilterSchema,
    response: { status: 200, description: "The submissions.", json: out.submissionListSchema },
    errors: [],
  }),
  createSubmission: defineRoute({
    operationId: "createSubmission",
    method: "POST",
    path: "/api/v1/submissions",
    tag: "submissions",
    summary: "Submit a site's file (multipart upload) or rows (JSON); written whole or not at all, superseding the current submission of the kind",
    description:
      "Every row is validated; one bad row refuses the whole submission with a field error per problem (file, row, column, value, reason). Content identical to the current submission is recognised and not stored again (HTTP 200, unchanged: true).",
    body: jsonSubmissionSchema,
    multipart: { schema: uploadFormSchema, description: "A file upload: the file in 'file', the other fields as text (mapping as JSON)." },
    response: { status: 201, description: "The stored submission.", json: out.submissionWriteResultSchema },
    errors: ["not_found", "conflict", "too_large"],
  }),
  getSubmission: defineRoute({
    operationId: "getSubmission",
    method: "GET",
    path: "/api/v1/submissions/{id}",
    tag: "submissions",
    summary: "One submission's provenance",
    params: z.object({ id: id("submission") }),
    response: { status: 200, description: "The submission.", json: out.submissionSchema },
    errors: ["not_found"],
  }),
  restoreSubmission: defineRoute({
    operationId: "restoreSubmission",
    method: "POST",
    path: "/api/v1/submissions/{id}/restore",
    tag: "submissions",
    summary: "Make an earlier (superseded) submission the site's current one again, as a new submission copying its rows",
    params: z.object({ id: id("submission") }),
    body: restoreSubmissionRequestSchema.pick({ expectedCurrentSubmissionId: true }),
    bodyOptional: true,
    response: { status: 201, description: "The restore.", json: out.restoreResultSchema },
    errors: ["not_found", "conflict"],
  }),
  listBroodRecords: defineRoute({
    operationId: "listBroodRecords",
    method: "GET",
    path: "/api/v1/brood-records",
    tag: "records",
    summary: "Brood records of the current submissions (or of one submission), filtered and paged",
    query: broodRecordFilterSchema.extend(pageSchema.shape),
    response: { status: 200, description: "A page of brood records by site, year and female.", json: out.broodRecordPageSchema },
    errors: [],
  }),
  listEstimates: defineRoute({
    operationId: "listEstimates",
    method: "GET",
    path: "/api/v1/estimates",
    tag: "records",
    summary: "Current estimates (uploaded and computed), filtered and paged",
    query: estimateFilterSchema.extend(pageSchema.shape),
    response: { status: 200, description: "A page of estimates by site, outcome, level, term and year.", json: out.estimatePageSchema },
    errors: [],
  }),
  listAnalyses: defineRoute({
    operationId: "listAnalyses",
    method: "GET",
    path: "/api/v1/analyses",
    tag: "analyses",
    summary: "Saved analyses, newest first",
    response: { status: 200, description: "The analyses with their runs.", json: out.analysisListSchema },
    errors: [],
  }),
  createAnalysis: defineRoute({
    operationId: "createAnalysis",
    method: "POST",
    path: "/api/v1/analyses",
    tag: "analyses",
    summary: "Save an analysis specification (what to pool, model, test, moderators, subsets)",
    body: analysisSpecificationSchema,
    response: { status: 201, description: "The saved analysis, defaults filled in.", json: out.analysisSchema },
    errors: ["conflict"],
  }),
  getAnalysis: defineRoute({
    operationId: "getAnalysis",
    method: "GET",
    path: "/api/v1/analyses/{id}",
    tag: "analyses",
    summary: "One analysis with its runs",
    params: z.object({ id: id("analysis") }),
    response: { status: 200, description: "The analysis.", json: out.analysisSchema },
    errors: ["not_found"],
  }),
  runAnalysis: defineRoute({
    operationId: "runAnalysis",
    method: "POST",
    path: "/api/v1/analyses/{id}/runs",
    tag: "analyses",
    summary: "Fit the analysis on today's current estimates and store the run",
    params: z.object({ id: id("analysis") }),
    response: { status: 201, description: "The stored run with its result.", json: out.analysisRunSchema },
    errors: ["not_found", "cannot_compute"],
  }),
  getAnalysisRun: defineRoute({
    operationId: "getAnalysisRun",
    method: "GET",
    path: "/api/v1/analyses/{id}/runs/{runId}",
    tag: "analyses",
    summary: "A run's stored result, and whether the data changed since",
    params: z.object({ id: id("analysis"), runId: id("run") }),
    response: { status: 200, description: "The run.", json: out.analysisRunSchema },
    errors: ["not_found"],
  }),
  exportEstimates: defineRoute({
    operationId: "exportEstimates",
    method: "GET",
    path: "/api/v1/export/estimates",
    tag: "export",
    summary: "Every estimate matching the filter, as CSV or JSON",
    query: estimateFilterSchema.extend(exportFormat),
    response: {
      status: 200,
      description: "All matching estimates (no paging).",
      json: z.array(out.estimateSchema),
      otherContent: { "text/csv": "One row per estimate; spreadsheet formulas neutralised (see the data package description)." },
    },
    errors: [],
  }),
  exportBroodRecords: defineRoute({
    operationId: "exportBroodRecords",
    method: "GET",
    path: "/api/v1/export/brood-records",
    tag: "export",
    summary: "Every brood record matching the filter, as CSV or JSON",
    query: broodRecordFilterSchema.extend(exportFormat),
    response: {
      status: 200,
      description: "All matching brood records (no paging).",
      json: z.array(out.broodRecordSchema),
      otherContent: { "text/csv": "One row per brood." },
    },
    errors: [],
  }),
  exportAnalysisRun: defineRoute({
    operationId: "exportAnalysisRun",
    method: "GET",
    path: "/api/v1/export/analysis-runs/{runId}",
    tag: "export",
    summary: "A run's result as CSV (one row per model coefficient) or JSON",
    params: z.object({ runId: id("run") }),
    query: z.object({ ...exportFormat, table: z.enum(["coefficients", "studies"]).default("coefficients").describe("For CSV: the fitted coefficients or the pooled studies.") }),
    response: {
      status: 200,
      description: "The run's result.",
      json: out.analysisRunSchema,
      otherContent: { "text/csv": "The chosen table of the result." },
    },
    errors: ["not_found"],
  }),
  exportDataPackage: defineRoute({
    operationId: "exportDataPackage",
    method: "GET",
    path: "/api/v1/export/datapackage",
    tag: "export",
    summary: "The whole network as a Frictionless Data Package (zip of datapackage.json and one CSV per table)",
    response: {
      status: 200,
      description: "A zip archive.",
      otherContent: { "application/zip": "datapackage.json (Table Schema per resource, primary and foreign keys) and one CSV per resource." },
    },
    errors: [],
  }),
} satisfies Record<string, RouteDefinition>;

export const API_ROUTES: readonly RouteDefinition[] = Object.values(apiRoutes);
