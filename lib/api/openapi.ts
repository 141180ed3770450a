import { z } from "zod";
import { HTTP_STATUS, type ErrorCode } from "../errors/app-error";
import { ENGINE_VERSION } from "../analyses/engine-version";
import { API_ROUTES } from "./routes";
import type { RouteDefinition } from "./route-definition";
import { describeAccess } from "./route-access";
import { SESSION_COOKIE } from "../auth/sessions";
import { API_TOKEN_PREFIX } from "../auth/api-tokens";
import { RESPONSE_COMPONENTS } from "./schemas";
import { siteInputSchema } from "../network/site-input";
import { moderatorInputSchema, moderatorValueInputSchema } from "../network/moderator-input";
import { jsonSubmissionSchema } from "../submissions/submit-json-rows";
import { analysisSpecificationSchema } from "../analyses/specification";
import { broodRecordRowSchema } from "../ingest/schemas/brood-record-row";
import { siteYearRowSchema } from "../ingest/schemas/site-year-row";
import { estimateRowSchema } from "../ingest/schemas/estimate-row";

/**
 * The OpenAPI 3.1 document of the JSON API, generated from the route registry and its zod schemas
 * with zod's own JSON Schema (draft 2020-12) output, which OpenAPI 3.1 uses as its schema dialect.
 * Request schemas are described as a client sends them (defaults optional), replies as the server
 * sends them.
 */
const REQUEST_COMPONENTS: Record<string, z.ZodType> = {
  SiteInput: siteInputSchema,
  ModeratorInput: moderatorInputSchema,
  ModeratorValueInput: moderatorValueInputSchema,
  JsonSubmission: jsonSubmissionSchema,
  AnalysisSpecification: analysisSpecificationSchema,
  BroodRecordRow: broodRecordRowSchema,
  SiteYearRow: siteYearRowSchema,
  EstimateRow: estimateRowSchema,
};

type JsonSchema = Record<string, unknown>;
type Io = "input" | "output";

const COMPONENT_PREFIX = "#/components/schemas/";

/**
 * Component names live in zod's global registry (where .describe() also puts descriptions), so
 * every schema that embeds a component refers to it instead of repeating it.
 */
for (const [id, schema] of Object.entries({ ...REQUEST_COMPONENTS, ...RESPONSE_COMPONENTS })) {
  const existing = z.globalRegistry.get(schema);
  if (existing?.id === id) continue;
  z.globalRegistry.remove(schema);
  z.globalRegistry.add(schema, { ...existing, id });
}

/** Rewrites zod's local "#/$defs/X" references to the document's components and drops the copies. */
function toComponentRefs(value: unknown): unknown {
  if (Array.isArray(value)) return value.map(toComponentRefs);
  if (value && typeof value === "object") {
    const result: Record<string, unknown> = {};
    for (const [key, inner] of Object.entries(value)) {
      if (key === "$schema" || key === "$defs" || key === "$id") continue;
      result[key] = key === "$ref" && typeof inner === "string" ? inner.replace(/^#\/\$defs\//, COMPONENT_PREFIX) : toComponentRefs(inner);
    }
    return result;
  }
  return value;
}

function rawSchemaOf(schema: z.ZodType, io: Io) {
  return z.toJSONSchema(schema, { target: "draft-2020-12", io, unrepresentable: "any" }) as JsonSchema & { $defs?: Record<string, JsonSchema> };
}

function schemaOf(schema: z.ZodType, io: Io): JsonSchema {
  return toComponentRefs(rawSchemaOf(schema, io)) as JsonSchema;
}

/** Request components as a client sends them, response components as the server sends them. */
function components(): Record<string, JsonSchema> {
  const all: Record<string, JsonSchema> = {};
  for (const [io, list] of [["input", REQUEST_COMPONENTS], ["output", RESPONSE_COMPONENTS]] as const) {
    for (const [id, schema] of Object.entries(list)) {
      const definition = rawSchemaOf(schema, io).$defs?.[id];
      if (!definition) throw new Error(`OpenAPI component ${id} was not generated`);
      all[id] = toComponentRefs(definition) as JsonSchema;
    }
  }
  return all;
}

function parameters(route: RouteDefinition) {
  const list: JsonSchema[] = [];
  for (const [where, schema] of [["path", route.params], ["query", route.query]] as const) {
    if (!schema) continue;
    const objectSchema = schemaOf(schema, "input") as { properties?: Record<string, JsonSchema>; required?: string[] };
    for (const [name, property] of Object.entries(objectSchema.properties ?? {})) {
      const { description, ...propertySchema } = property;
      list.push({
        name,
        in: where,
        required: where === "path" || (objectSchema.required ?? []).includes(name),
        ...(typeof description === "string" ? { description } : {}),
        schema: propertySchema,
        ...(propertySchema.type === "array" ? { style: "form", explode: true } : {}),
      });
    }
  }
  return list;
}

function errorCodesOf(route: RouteDefinition): ErrorCode[] {
  const codes = new Set<ErrorCode>(route.errors);
  if (route.params || route.query || route.body || route.multipart) codes.add("invalid_input");
  if (route.access.scope !== "public") {
    codes.add("unauthenticated");
    codes.add("forbidden");
  }
  if (route.body || route.multipart) codes.add("too_large");
  if (route.method !== "GET") codes.add("storage_unavailable");
  codes.add("internal");
  return [...codes];
}

function responses(route: RouteDefinition) {
  const content: Record<string, unknown> = {};
  if (route.response.json) content["application/json"] = { schema: schemaOf(route.response.json, "output") };
  for (const [mediaType, description] of Object.entries(route.response.otherContent ?? {})) {
    content[mediaType] = { schema: { type: "string", ...(mediaType === "application/zip" ? { contentMediaType: "application/zip" } : {}), description } };
  }
  const result: Record<string, unknown> = { [String(route.response.status)]: { description: route.response.description, content } };
  const byStatus = new Map<number, ErrorCode[]>();
  for (const code of errorCodesOf(route)) byStatus.set(HTTP_STATUS[code], [...(byStatus.get(HTTP_STATUS[code]) ?? []), code]);
  for (const [status, codes] of [...byStatus.entries()].sort((a, b) => a[0] - b[0])) {
    result[String(status)] = {
      description: `Error (${codes.join(" or ")}).`,
      content: { "application/json": { schema: { $ref: `${COMPONENT_PREFIX}ErrorBody` } } },
    };
  }
  return result;
}

function operation(route: RouteDefinition) {
  const requestContent: Record<string, unknown> = {};
  if (route.body) requestContent["application/json"] = { schema: schemaOf(route.body, "input") };
  if (route.multipart) requestContent["multipart/form-data"] = { schema: { ...schemaOf(route.multipart.schema, "input"), description: route.multipart.description } };
  return {
    operationId: route.operationId,
    tags: [route.tag],
    summary: route.summary,
    description: [route.description, describeAccess(route.access)].filter(Boolean).join("\n\n"),
    // Public routes need no credentials; every other one takes either scheme (the document's default).
    ...(route.access.scope === "public" ? { security: [] } : {}),
    parameters: parameters(route),
    ...(Object.keys(requestContent).length ? { requestBody: { required: true, content: requestContent } } : {}),
    responses: responses(route),
  };
}

/** How a caller signs in: the browser's session cookie, or an API token for scripts. */
const SECURITY_SCHEMES = {
  sessionCookie: {
    type: "apiKey",
    in: "cookie",
    name: SESSION_COOKIE,
    description:
      "The session of a signed-in browser (HttpOnly, SameSite=Lax). Requests that change data with it must come from PhenoPool's own pages: cross-site requests are refused (403).",
  },
  bearerToken: {
    type: "http",
    scheme: "bearer",
    description: `An API token (${API_TOKEN_PREFIX}...), created on the account's API tokens page and shown once; it acts with its user's role on its user's sites, and can be revoked.`,
  },
} as const;

/** The whole document; `serverUrl` is where the API is served (default: the same origin). */
export function buildOpenApiDocument(serverUrl = "/") {
  const paths: Record<string, Record<string, unknown>> = {};
  for (const route of API_ROUTES) {
    paths[route.path] ??= {};
    paths[route.path]![route.method.toLowerCase()] = operation(route);
  }
  return {
    openapi: "3.1.0",
    jsonSchemaDialect: "https://json-schema.org/draft/2020-12/schema",
    info: {
      title: "PhenoPool API",
      version: ENGINE_VERSION,
      description:
        "The JSON API of a PhenoPool network: sites, moderators, submissions with their provenance, brood records and estimates, analyses and their runs, and exports. Every route but this document needs a signed-in caller (session cookie or API token); each operation's description says which role may call it. Errors always have the shape {error: {code, message, fieldErrors}}.",
    },
    servers: [{ url: serverUrl }],
    security: [{ sessionCookie: [] }, { bearerToken: [] }],
    paths,
    components: { schemas: components(), securitySchemes: SECURITY_SCHEMES },
  };
}
