import { STORAGE_FAILURE_MESSAGES, storageFailureOf } from "./storage-failure";

/**
 * The one application error. The API, the pages and the CLI report it the same way:
 * `code` picks the HTTP status and the CLI exit code, `message` says what is wrong in plain words,
 * `fieldErrors` names each bad field (for uploads: file, row and column).
 */
export const ERROR_CODES = [
  "invalid_input",
  "not_found",
  "conflict",
  "unauthenticated",
  "forbidden",
  "too_large",
  "too_many_requests",
  "cannot_compute",
  "storage_unavailable",
  "internal",
] as const;
export type ErrorCode = (typeof ERROR_CODES)[number];

export const HTTP_STATUS: Record<ErrorCode, number> = {
  invalid_input: 422,
  not_found: 404,
  conflict: 409,
  unauthenticated: 401,
  forbidden: 403,
  too_large: 413,
  too_many_requests: 429,
  cannot_compute: 422,
  /** The database's disk is full or the database is read-only (see storage-failure.ts). */
  storage_unavailable: 503,
  internal: 500,
};

export interface FieldError {
  /** Dotted path or column name. */
  field: string;
  message: string;
  /** 1-based data row of an uploaded file, when the error is about one row. */
  row?: number;
  file?: string;
  value?: string;
}

export interface AppErrorJson {
  error: { code: ErrorCode; message: string; fieldErrors: FieldError[] };
}

export class AppError extends Error {
  readonly code: ErrorCode;
  readonly fieldErrors: FieldError[];

  constructor(code: ErrorCode, message: string, fieldErrors: FieldError[] = []) {
    super(message);
    this.name = "AppError";
    this.code = code;
    this.fieldErrors = fieldErrors;
  }

  get httpStatus(): number {
    return HTTP_STATUS[this.code];
  }

  toJSON(): AppErrorJson {
    return { error: { code: this.code, message: this.message, fieldErrors: this.fieldErrors } };
  }
}

/**
 * Any thrown value as an AppError: a full or read-only database becomes `storage_unavailable`
 * with what to do about it; other unknown failures become `internal` with their message kept.
 */
export function toAppError(error: unknown): AppError {
  if (error instanceof AppError) return error;
  const storage = storageFailureOf(error);
  if (storage) return new AppError("storage_unavailable", STORAGE_FAILURE_MESSAGES[storage]);
  const message = error instanceof Error ? error.message : String(error);
  return new AppError("internal", message);
}
