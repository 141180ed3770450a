import { ZodError } from "zod";
import { AppError, toAppError, type AppErrorJson } from "../errors/app-error";
import { storageFailureOf } from "../errors/storage-failure";
import { ModelInputError } from "../stats/model-error";
import { zodFieldErrors } from "./zod-field-errors";

/** Prisma's own error for a violated unique constraint or a record that vanished mid-request. */
interface PrismaKnownError {
  name: string;
  code: string;
  meta?: { target?: unknown; modelName?: unknown };
}

function isPrismaKnownError(error: unknown): error is PrismaKnownError {
  return error instanceof Error && error.name === "PrismaClientKnownRequestError" && typeof (error as { code?: unknown }).code === "string";
}

/**
 * Any thrown value as the application error the API reports. Zod failures are invalid_input with
 * one field error per issue; a model that cannot be fitted is cannot_compute; a unique-constraint
 * clash is conflict; a full or read-only database is storage_unavailable (HTTP 503). Anything else
 * is internal (HTTP 500) and is logged.
 */
export function toApiError(error: unknown): AppError {
  if (error instanceof AppError) return error;
  if (storageFailureOf(error)) return toAppError(error);
  if (error instanceof ZodError) return new AppError("invalid_input", "the request is not valid", zodFieldErrors(error.issues));
  if (error instanceof ModelInputError) return new AppError("cannot_compute", error.message);
  if (isPrismaKnownError(error)) {
    if (error.code === "P2002") {
      const target = Array.isArray(error.meta?.target) ? error.meta.target.join(", ") : String(error.meta?.target ?? "a unique field");
      return new AppError("conflict", `a record with the same ${target} already exists`);
    }
    if (error.code === "P2025") return new AppError("not_found", "the record was not found (it may have just been removed)");
  }
  return toAppError(error);
}

/** The JSON reply for an error: {error: {code, message, fieldErrors}} with the code's HTTP status. */
export function errorResponse(error: unknown): Response {
  const appError = toApiError(error);
  if (appError.code === "internal") console.error("PhenoPool API: internal error", error);
  if (appError.code === "storage_unavailable") console.error("PhenoPool API: storage unavailable", error);
  const body: AppErrorJson = appError.toJSON();
  return Response.json(body, { status: appError.httpStatus });
}
