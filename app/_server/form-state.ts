import type { FieldError } from "@/lib/errors/app-error";
import { toAppError } from "@/lib/errors/app-error";
import type { z } from "zod";

/** What a server action hands back to its form: the error message and the fields at fault, or a note of what was done. */
export interface FormState {
  message: string | null;
  fieldErrors: FieldError[];
  /** Set when the action succeeded: what changed, in words. */
  done?: string;
}

export const EMPTY_FORM_STATE: FormState = { message: null, fieldErrors: [] };

export function formStateFromError(error: unknown): FormState {
  const appError = toAppError(error);
  return { message: appError.message, fieldErrors: appError.fieldErrors };
}

export function formStateFromZod(error: z.ZodError): FormState {
  return {
    message: "Please correct the fields marked below.",
    fieldErrors: error.issues.map((issue) => ({ field: issue.path.join("."), message: issue.message })),
  };
}
