import { join } from "node:path";
import { pathToFileURL } from "node:url";
import { expect } from "vitest";
import type { RouteDefinition } from "@/lib/api/route-definition";
import type { RouteHandler } from "@/lib/api/handle-route";
import { errorBodySchema } from "@/lib/api/schemas";
import type { Db } from "@/lib/db/client";
import { SESSION_COOKIE, startSession } from "@/lib/auth/sessions";

/**
 * Calls a route handler the way Next.js does (a Request and a params promise), by importing the
 * app/api/v1/.../route.ts file that serves the registry entry, and checks the reply against the
 * registry: a success has the route's status and (for JSON) parses with its response schema; an
 * error has the AppError body shape. Every call is counted, so a suite can tell which routes it
 * exercised.
 */
/** Who a call comes from: a session cookie, an API token, or neither (anonymous); extra headers such as Origin. */
export interface Caller {
  sessionSecret?: string;
  apiToken?: string;
  headers?: Record<string, string>;
}

let defaultCaller: Caller = {};

/** Makes every later call (without its own `as`) come from `caller`. */
export function callAs(caller: Caller): void {
  defaultCaller = caller;
}

/**
 * Creates an active coordinator account with a live session in `db` and makes it the caller of
 * every later call: the contract tests exercise the routes as the network's coordinator.
 */
export async function signInTestCoordinator(db: Db, email = "contract-coordinator@example.org"): Promise<{ userId: number; sessionSecret: string }> {
  const user = await db.user.create({ data: { email, displayName: "Contract Coordinator", role: "coordinator" } });
  const session = await startSession(db, user.id);
  callAs({ sessionSecret: session.secret });
  return { userId: user.id, sessionSecret: session.secret };
}

/** The request headers that carry a caller's credentials. */
export function callerHeaders(caller: Caller): Record<string, string> {
  return {
    ...(caller.sessionSecret ? { cookie: `${SESSION_COOKIE}=${caller.sessionSecret}` } : {}),
    ...(caller.apiToken ? { authorization: `Bearer ${caller.apiToken}` } : {}),
    ...caller.headers,
  };
}

export interface CallOptions {
  /** Who calls (default: the caller set by callAs). */
  as?: Caller;
  params?: Record<string, string>;
  /** Query parameters; an array repeats the parameter. */
  query?: Record<string, string | string[]>;
  /** A JSON body (sent with Content-Type application/json). */
  json?: unknown;
  /** A raw body with its own content type; a stream is sent as it comes (no Content-Length). */
  raw?: { body: string | ReadableStream<Uint8Array>; contentType: string };
  /** A multipart/form-data body. */
  form?: FormData;
}

export interface CallResult {
  status: number;
  contentType: string;
  /** Parsed JSON (validated), or null for a non-JSON reply. */
  body: any; // eslint-disable-line @typescript-eslint/no-explicit-any
  text: string;
  bytes: Uint8Array;
}

export const calls: { route: RouteDefinition; status: number }[] = [];

/** app/api/v1/sites/{code} -> app/api/v1/sites/[code]/route.ts */
export function routeFileOf(path: string): string {
  return join(process.cwd(), "app", ...path.replace(/^\//, "").split("/").map((segment) => segment.replace(/^\{(.+)\}$/, "[$1]")), "route.ts");
}

export async function callRoute(route: RouteDefinition, options: CallOptions = {}): Promise<CallResult> {
  const module = (await import(pathToFileURL(routeFileOf(route.path)).href)) as Record<string, RouteHandler | undefined>;
  const handler = module[route.method];
  if (!handler) throw new Error(`${routeFileOf(route.path)} exports no ${route.method}`);
  let path = route.path;
  for (const [name, value] of Object.entries(options.params ?? {})) path = path.replace(`{${name}}`, encodeURIComponent(value));
  const url = new URL(`http://localhost${path}`);
  for (const [name, value] of Object.entries(options.query ?? {})) for (const v of [value].flat()) url.searchParams.append(name, v);
  const headers: Record<string, string> = callerHeaders(options.as ?? defaultCaller);
  const init: RequestInit & { duplex?: "half" } = { method: route.method, headers };
  if (options.json !== undefined) init.body = JSON.stringify(options.json);
  if (options.raw) init.body = options.raw.body;
  if (init.body instanceof ReadableStream) init.duplex = "half";
  if (init.body !== undefined) headers["content-type"] = options.raw?.contentType ?? "application/json";
  if (options.form) init.body = options.form;
  const response = await handler(new Request(url, init), { params: Promise.resolve(options.params ?? {}) });
  calls.push({ route, status: response.status });
  const bytes = new Uint8Array(await response.arrayBuffer());
  const text = new TextDecoder().decode(bytes);
  const contentType = response.headers.get("content-type") ?? "";
  let body = null;
  if (contentType.startsWith("application/json")) {
    const json: unknown = JSON.parse(text);
    if (response.status < 400) {
      expect([route.response.status, 200], `${route.method} ${route.path} status`).toContain(response.status);
      if (route.response.json) body = route.response.json.parse(json);
      else throw new Error(`${route.method} ${route.path} replied JSON, which its registry entry does not declare`);
    } else body = errorBodySchema.parse(json);
  } else if (response.status < 400) {
    expect(Object.keys(route.response.otherContent ?? {}).some((type) => contentType.startsWith(type)), `${route.method} ${route.path}: ${contentType} is declared`).toBe(true);
  }
  return { status: response.status, contentType, body, text, bytes };
}
