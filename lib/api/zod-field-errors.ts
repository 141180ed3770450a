import type { z } from "zod";
import type { FieldError } from "../errors/app-error";

/**
 * Zod issues as field errors: the dotted path names the field ("(body)" for the whole value),
 * `prefix` says where the value came from ("query", "path", or nothing for a JSON body).
 */
export function zodFieldErrors(issues: readonly z.core.$ZodIssue[], prefix?: string): FieldError[] {
  return issues.map((issue) => {
    const path = issue.path.map(String).join(".");
    const field = [prefix, path].filter(Boolean).join(".") || "(body)";
    return { field, message: issue.message };
  });
}
