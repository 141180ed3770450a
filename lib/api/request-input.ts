import { z } from "zod";
import { AppError } from "../errors/app-error";
import { zodFieldErrors } from "./zod-field-errors";

/** The largest JSON body the API reads (a brood-record submission of ~200 000 rows fits). */
export const MAX_JSON_BODY_BYTES = 64 * 1024 * 1024;
/** The largest form (file upload) the API reads; the upload's own limits are checked after. */
export const MAX_FORM_BODY_BYTES = 512 * 1024 * 1024;

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
 * A JSON request body as text, refused when it is not JSON, empty or larger than MAX_JSON_BODY_BYTES.
 * Returns the text (to hash) and the parsed value.
 */
export async function readJsonBody(request: Request): Promise<{ text: string; value: unknown }> {
  const declared = Number(request.headers.get("content-length") ?? "0");
  if (declared > MAX_JSON_BODY_BYTES) throw new AppError("too_large", `the body is ${declared} bytes; the limit is ${MAX_JSON_BODY_BYTES}`);
  const type = request.headers.get("content-type") ?? "";
  if (!/^application\/(.+\+)?json\b/i.test(type)) {
    throw new AppError("invalid_input", `send the body as JSON (Content-Type: application/json), not '${type || "no content type"}'`, [
      { field: "(body)", message: "expected Content-Type application/json" },
    ]);
  }
  const text = await request.text();
  if (text.length > MAX_JSON_BODY_BYTES) throw new AppError("too_large", `the body is larger than the limit of ${MAX_JSON_BODY_BYTES} bytes`);
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

/** A multipart/form-data body; a malformed one is invalid_input, not a server error. */
export async function readFormData(request: Request): Promise<FormData> {
  const declared = Number(request.headers.get("content-length") ?? "0");
  if (declared > MAX_FORM_BODY_BYTES) throw new AppError("too_large", `the upload is ${declared} bytes; the limit is ${MAX_FORM_BODY_BYTES}`);
  try {
    return await request.formData();
  } catch (error) {
    throw new AppError("invalid_input", "the form could not be read as multipart/form-data", [{ field: "(body)", message: (error as Error).message }]);
  }
}
