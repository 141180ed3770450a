import type { z } from "zod";
import type { ErrorCode } from "../errors/app-error";
import type { RouteAccess } from "./route-access";

export type HttpMethod = "GET" | "POST" | "PUT" | "PATCH" | "DELETE";

/**
 * One route of the JSON API: what it accepts and returns. The registry (routes.ts) lists every
 * route; the route handlers parse their input with these schemas, the OpenAPI document is
 * generated from them, and the contract tests check replies against them.
 */
export interface RouteDefinition {
  /** Unique, camelCase: the OpenAPI operationId. */
  operationId: string;
  method: HttpMethod;
  /** OpenAPI form: /api/v1/sites/{code}. */
  path: string;
  tag: string;
  summary: string;
  description?: string;
  params?: z.ZodObject;
  query?: z.ZodObject;
  /** A JSON request body. */
  body?: z.ZodType;
  /** The body may be left out; it is then read as {}. */
  bodyOptional?: boolean;
  /** Also accepts multipart/form-data with these fields (a file upload); handleRoute reads the form and hands it to the handler. */
  multipart?: { schema: z.ZodObject; description: string };
  response: {
    status: 200 | 201;
    description: string;
    /** The JSON reply (application/json). */
    json?: z.ZodType;
    /** Other media types the route can reply with, each with a description. */
    otherContent?: Record<string, string>;
  };
  /** Error codes the route can answer with besides invalid_input and internal (and, for signed-in routes, unauthenticated and forbidden). */
  errors: readonly ErrorCode[];
  /** Who may call the route: enforced by handleRoute before the handler runs (required: no route without one). */
  access: RouteAccess;
}

export function defineRoute<const D extends RouteDefinition>(definition: D): D {
  return definition;
}
