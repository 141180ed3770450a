import type { z } from "zod";
import type { Actor } from "../auth/actor";
import { authorize, decide, readableSites, type Action, type ActionTarget, type Decision, type SiteScope } from "../auth/policy";
import { requestActor } from "../auth/request-actor";
import { getDb } from "../db/client";
import { readNetworkSettings, type NetworkSettings } from "../settings/network-settings";
import { AppError } from "../errors/app-error";
import { errorResponse } from "./error-response";
import { multipartFieldsOf, receiveMultipartUpload, type MultipartUpload } from "./multipart-upload";
import { parseBody, parsePathParams, parseQuery, readJsonBody } from "./request-input";
import { resolveTargetSite } from "./route-access";
import type { RouteDefinition } from "./route-definition";

type Parsed<S> = S extends z.ZodType ? z.output<S> : undefined;

export interface RouteInput<D extends RouteDefinition> {
  request: Request;
  /** Who is asking (see lib/auth/request-actor.ts), already allowed by the route's access rule. */
  actor: Actor;
  params: Parsed<D["params"]>;
  query: Parsed<D["query"]>;
  /** The JSON body parsed by the definition's schema (undefined for a multipart request). */
  body: Parsed<D["body"]>;
  /** The JSON body's text, for hashing what was sent. */
  bodyText: string | undefined;
  /**
   * The multipart form of a file upload: its text fields, and its file streamed to a temporary
   * file (received once, before authorization, to find its site; removed when the handler is done).
   */
  form: D["multipart"] extends object ? MultipartUpload | undefined : undefined;
  /** The site a site-scoped route acts on (its id), as resolved for authorization. */
  siteId: D["access"] extends { scope: "site" } ? number : undefined;
  /** For a list of per-site rows: the sites whose rows the actor may read. */
  siteScope: D["access"] extends { scope: "rows" } ? SiteScope : undefined;
  /** Asks the same policy a finer question (e.g. whether to include a site's estimates). */
  may: (action: Action, target?: ActionTarget) => Decision;
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
 * A Next.js route handler for `definition`, and the one place the JSON API enforces who may do
 * what. In order: refuses a cross-site request that would change data (403) and resolves the
 * actor from the bearer token or session cookie; refuses anonymous callers of every non-public
 * route (401) before reading their input; parses path, query and body (or the upload form) with
 * the definition's schemas; finds the target site of a site-scoped route (404 when it does not
 * exist); asks the policy with the route's declared action (403 with the reason); then calls
 * `handler` and sends its value as JSON with the definition's status (a Response returned by the
 * handler is sent as it is). Every thrown error becomes the AppError JSON reply: bad input 422
 * with field errors, unknown ids 404, never a 500 for bad input. An upload's temporary file is
 * removed once the reply is made, whatever happened.
 */
export function handleRoute<D extends RouteDefinition>(definition: D, handler: (input: RouteInput<D>) => Promise<unknown>): RouteHandler {
  return async (request, context) => {
    let form: MultipartUpload | undefined;
    try {
      const db = getDb();
      const actor = await requestActor(db, request);
      const { access } = definition;
      const settings: NetworkSettings = await readNetworkSettings(db);
      if (access.scope !== "public") authorize(actor, "network.read", {}, settings);
      const params = (definition.params ? parsePathParams((await context?.params) ?? {}, definition.params) : undefined) as Parsed<D["params"]>;
      const query = (definition.query ? parseQuery(request.url, definition.query) : undefined) as Parsed<D["query"]>;
      let body: unknown;
      let bodyText: string | undefined;
      if (definition.multipart && isMultipart(request)) {
        // Refuse an account that may not do this at any site before it sends a large body to disk.
        if (access.scope === "site") {
          const scope = readableSites(actor, access.action, settings);
          if (!scope.allSites && scope.siteIds.length === 0) throw new AppError("forbidden", scope.reason);
        }
        form = await receiveMultipartUpload(request, multipartFieldsOf(definition.multipart.schema));
      } else if (definition.body) {
        if (definition.bodyOptional && !request.headers.get("content-type") && !request.body) {
          body = parseBody({}, definition.body);
        } else {
          const read = await readJsonBody(request);
          bodyText = read.text;
          body = parseBody(read.value, definition.body);
        }
      }
      let siteId: number | undefined;
      let siteScope: SiteScope | undefined;
      if (access.scope === "network") authorize(actor, access.action, {}, settings);
      if (access.scope === "site") {
        // An upload form's text fields name its site as a JSON body's fields do.
        siteId = await resolveTargetSite(db, access.site, { params, body: form ? Object.fromEntries(form.fields) : body });
        authorize(actor, access.action, { siteId }, settings);
      }
      if (access.scope === "rows") siteScope = readableSites(actor, access.action, settings);
      const result = await handler({
        request,
        actor,
        params,
        query,
        body: body as Parsed<D["body"]>,
        bodyText,
        form: form as RouteInput<D>["form"],
        siteId: siteId as RouteInput<D>["siteId"],
        siteScope: siteScope as RouteInput<D>["siteScope"],
        may: (action, target = {}) => decide(actor, action, target, settings),
      });
      if (result instanceof Response) return result;
      return Response.json(result, { status: definition.response.status });
    } catch (error) {
      return errorResponse(error);
    } finally {
      await form?.dispose();
    }
  };
}
