"use server";

import { redirect } from "next/navigation";
import { getDb } from "@/lib/db/client";
import { createFirstCoordinator, firstCoordinatorSchema } from "@/lib/auth/create-first-coordinator";
import { startSession } from "@/lib/auth/sessions";
import { setSessionCookie } from "../_server/session-cookie";
import { formStateFromError, formStateFromZod, type FormState } from "../_server/form-state";

export async function createCoordinatorAction(_previous: FormState, form: FormData): Promise<FormState> {
  const parsed = firstCoordinatorSchema.safeParse({ email: form.get("email"), displayName: form.get("displayName"), password: form.get("password") });
  if (!parsed.success) return formStateFromZod(parsed.error);
  try {
    const { userId } = await createFirstCoordinator(getDb(), parsed.data);
    const session = await startSession(getDb(), userId);
    await setSessionCookie(session.secret, session.expiresAt);
  } catch (error) {
    return formStateFromError(error);
  }
  redirect("/");
}
