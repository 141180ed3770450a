"use server";

import { redirect } from "next/navigation";
import { getDb } from "@/lib/db/client";
import { signIn, signInSchema } from "@/lib/auth/sign-in";
import { endAllSessions, endSession } from "@/lib/auth/sessions";
import { clearSessionCookie, clientAddress, readSessionCookie, setSessionCookie } from "../_server/session-cookie";
import { currentActor } from "../_server/current-actor";
import { formStateFromError, formStateFromZod, type FormState } from "../_server/form-state";

export async function signInAction(_previous: FormState, form: FormData): Promise<FormState> {
  const parsed = signInSchema.safeParse({ email: form.get("email"), password: form.get("password") });
  if (!parsed.success) return formStateFromZod(parsed.error);
  try {
    const session = await signIn(getDb(), parsed.data, { address: await clientAddress(), previousSecret: await readSessionCookie() });
    await setSessionCookie(session.secret, session.expiresAt);
  } catch (error) {
    return formStateFromError(error);
  }
  redirect("/");
}

export async function signOutAction(form: FormData): Promise<void> {
  const secret = await readSessionCookie();
  if (form.get("everywhere") === "yes") {
    const actor = await currentActor();
    if (actor.userId !== null) await endAllSessions(getDb(), actor.userId);
  } else if (secret) {
    await endSession(getDb(), secret);
  }
  await clearSessionCookie();
  redirect("/sign-in");
}
