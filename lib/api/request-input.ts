import { z } from "zod";
import { readEnv } from "../config/env";
import { AppError } from "../errors/app-error";
import { zodFieldErrors } from "./zod-field-errors";

/** Room for the multipart framing and the form's text fields beside the file itself. */
export const FORM_OVERHEAD_BYTES = 1024 * 1024;

/**
 * The largest bodies the API reads, from the environment: JSON bodies up to
 * PHENOPOOL_MAX_JSON_BODY_BYTES; upload forms up to PHENOPOOL_MAX_UPLOAD_BYTES (the file's own
 * limit, which the upload checks again with the file named) plus room for the other fields.
 */
export interface BodyLimits {
  jsonBytes: number;
  formBytes: number;
  /** The variable that sets each limit, named in the refusal. */
  jsonVariable: string;
  formVariable: string;
}

export function bodyLimitsFromEnv(): BodyLimits {
  const env = readEnv();
  return {
    jsonBytes: env.PHENOPOOL_MAX_JSON_BODY_BYTES,
    formBytes: env.PHENOPOOL_MAX_UPLOAD_BYTES + FORM_OVERHEAD_BYTES,
    jsonVariable: "PHENOPOOL_MAX_JSON_BODY_BYTES",
    formVariable: "PHENOPOOL_MAX_UPLOAD_BYTES",
  };
}

function describeBytes(bytes: number): string {
  const mib = bytes / (1024 * 1024);
  return mib >= 1 ? `${bytes} bytes (${Number.isInteger(mib) ? mib : mib.toFixed(1)} MiB)` : `${bytes} bytes`;
}

/** The refusal of a body larger than `limit` (HTTP 413), naming the limit and the variable that sets it. */
export function bodyTooLarge(what: string, size: string, limit: number, variable: string): AppError {
  return new AppError("too_large", `the ${what} is ${size}; this server accepts at most ${describeBytes(limit)} (set by ${variable})`, [
    { field: "(body)", message: `larger than ${limit} bytes` },
  ]);
}

/**
 * The body's bytes, refused with AppError too_large (HTTP 413) as soon as they exceed `limit`:
 * from Content-Length before reading anything, or while streaming when it is absent or wrong.
 */
async function readBodyWithin(request: Request, limit: number, what: string, variable: string): Promise<Uint8Array<ArrayBuffer>> {
  const refuse = (size: string) => bodyTooLarge(what, size, limit, variable);
  const declared = Number(request.headers.get("content-length") ?? Number.NaN);
  if (declared > limit) throw refuse(`${declared} bytes`);
  if (!request.body) return new Uint8Array(0);
  const reader = request.body.getReader();
  const chunks: Uint8Array[] = [];
  let total = 0;
  for (let next = await reader.read(); !next.done; next = await reader.read()) {
    total += next.value.byteLength;
    if (total > limit) {
      await reader.cancel().catch(() => undefined);
      throw refuse(`more than ${limit} bytes`);
    }
    chunks.push(next.value);
  }
  const body = new Uint8Array(total);
  let at = 0;
  for (const chunk of chunks) {
    body.set(chunk, at);
    at += chunk.byteLength;
  }
  return body;
}

function unwrap(schema: z.ZodType): z.ZodType {
  let current = schema;
  while (current instanceof z.ZodOptional || current instanceof z.ZodDefault || current instanceof z.ZodNullable) {
    current = current.unwrap() as z.ZodType;
  }
  return current;
}

/**
 * The query string parsed by an object schema. A parameter whose schema is an array collects every
 * repetition (?site=A&site=B); any other takes its single value (a repeated one is an error).
 * Unknown parameters are refused, so a misspelt filter never silently matches everything.
 * Throws AppError invalid_input with a field error per problem (fields named "query.<name>").
 */
export function parseQuery<S extends z.ZodObject>(url: string | URL, schema: S): z.output<S> {
  const params = new URL(url).searchParams;
  const raw: Record<string, string | string[]> = {};
  const errors: { field: string; message: string; value?: string }[] = [];
  for (const name of new Set(params.keys())) {
    const values = params.getAll(name);
    const fieldSchema = schema.shape[name] as z.ZodType | undefined;
    if (!fieldSchema) {
      errors.push({ field: `query.${name}`, message: `unknown parameter; expected one of ${Object.keys(schema.shape).join(", ") || "none"}`, value: values[0] });
      continue;
    }
    if (unwrap(fieldSchema) instanceof z.ZodArray) raw[name] = values.flatMap((v) => v.split(",")).map((v) => v.trim()).filter((v) => v !== "");
    else if (values.length > 1) errors.push({ field: `query.${name}`, message: "give this parameter once" });
    else raw[name] = values[0]!;
  }
  const parsed = schema.safeParse(raw);
  if (!parsed.success) errors.push(...zodFieldErrors(parsed.error.issues, "query"));
  if (errors.length) throw new AppError("invalid_input", "the query parameters are not valid", errors);
  return parsed.data as z.output<S>;
}

/** Path parameters (already URL-decoded by the router) parsed by an object schema; fields named "path.<name>". */
export function parsePathParams<S extends z.ZodObject>(params: Record<string, string | string[] | undefined>, schema: S): z.output<S> {
  const parsed = schema.safeParse(params);
  if (!parsed.success) throw new AppError("invalid_input", "the path is not valid", zodFieldErrors(parsed.error.issues, "path"));
  return parsed.data;
}

/**
 * A JSON request body as text, refused when it is not JSON, empty (invalid_input) or larger than
 * the JSON body limit (too_large, 413, naming the limit and PHENOPOOL_MAX_JSON_BODY_BYTES).
 * Returns the text (to hash) and the parsed value.
 */
export async function readJsonBody(request: Request, limits: BodyLimits = bodyLimitsFromEnv()): Promise<{ text: string; value: unknown }> {
  const type = request.headers.get("content-type") ?? "";
  if (!/^application\/(.+\+)?json\b/i.test(type)) {
    throw new AppError("invalid_input", `send the body as JSON (Content-Type: application/json), not '${type || "no content type"}'`, [
      { field: "(body)", message: "expected Content-Type application/json" },
    ]);
  }
  const text = new TextDecoder().decode(await readBodyWithin(request, limits.jsonBytes, "JSON body", limits.jsonVariable));
  if (text.trim() === "") throw new AppError("invalid_input", "the request body is empty", [{ field: "(body)", message: "expected a JSON value" }]);
  try {
    return { text, value: JSON.parse(text) };
  } catch (error) {
    throw new AppError("invalid_input", "the request body is not valid JSON", [{ field: "(body)", message: (error as Error).message }]);
  }
}

/** A parsed JSON body validated by `schema`. Throws AppError invalid_input with a field error per issue. */
export function parseBody<S extends z.ZodType>(value: unknown, schema: S): z.output<S> {
  const parsed = schema.safeParse(value);
  if (!parsed.success) throw new AppError("invalid_input", "the request body is not valid", zodFieldErrors(parsed.error.issues));
  return parsed.data;
}
