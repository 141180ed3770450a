import { expect } from "vitest";
import { AppError } from "@/lib/errors/app-error";

/** The AppError `promise` rejects with; fails the test when it resolves or rejects with anything else. */
export async function refusal(promise: Promise<unknown>): Promise<AppError> {
  const error = await promise.then(
    () => null,
    (e: unknown) => e,
  );
  expect(error).toBeInstanceOf(AppError);
  return error as AppError;
}
