import type { z } from "zod";
import type { Actor } from "../auth/actor";
import { requestActor } from "../auth/request-actor";
import { errorResponse } from "./error-response";
import { parseBody, parsePathParams, parseQuery, readJsonBody } from "./request-input";
import type { RouteDefinition } from "./route-definition";

type Parsed<S> = S extends z.ZodType ? z.output<S> : undefined;

export interface RouteInput<D extends RouteDefinition> {
  request: Request;
  /** Who is asking (see lib/auth/request-actor.ts). */
  actor: Actor;
  params: Parsed<D["params"]>;
  query: Parsed<D["query"]>;
  /** The JSON body parsed by the definition's schema (undefined for a multipart request). */
  body: Parsed<D["body"]>;
  /** The JSON body's text, for hashing what was sent. */
  bodyText: string | undefined;
}

/** The second argument Next.js passes to a route handler. */
export interface RouteContext {
  params?: Promise<Record<string, string | string[] | undefined>>;
}

export type RouteHandler = (request: Request, context?: RouteContext) => Promise<Response>;

function isMultipart(request: Request): boolean {
  return /^multipart\/form-data\b/i.test(request.headers.get("content-type") ?? "");
}

/**
 * A Next.js route handler for `definition`: resolves the actor, parses path, query and body with
 * the definition's schemas, calls `handler` and sends its value as JSON with the definition's
 * status (a Response returned by the handler is sent as it is). Every thrown error becomes the
 * AppError JSON reply: bad input 422 with field errors, unknown ids 404, never a 500 for bad input.
 */
export function handleRoute<D extends RouteDefinition>(definition: D, handler: (input: RouteInput<D>) => Promise<unknown>): RouteHandler {
  return async (request, context) => {
    try {
      const actor = await requestActor(request);
      const params = (definition.params ? parsePathParams((await context?.params) ?? {}, definition.params) : undefined) as Parsed<D["params"]>;
      const query = (definition.query ? parseQuery(request.url, definition.query) : undefined) as Parsed<D["query"]>;
      let body: unknown;
      let bodyText: string | undefined;
      if (definition.body && !(definition.multipart && isMultipart(request))) {
        if (definition.bodyOptional && !request.headers.get("content-type") && !request.body) {
          body = parseBody({}, definition.body);
        } else {
          const read = await readJsonBody(request);
          bodyText = read.text;
          body = parseBody(read.value, definition.body);
        }
      }
      const result = await handler({ request, actor, params, query, body: body as Parsed<D["body"]>, bodyText });
      if (result instanceof Response) return result;
      return Response.json(result, { status: definition.response.status });
    } catch (error) {
      return errorResponse(error);
    }
  };
}
