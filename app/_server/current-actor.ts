import "server-only";
import { cookies, headers } from "next/headers";
import { redirect } from "next/navigation";
import { getDb } from "@/lib/db/client";
import { resolveActor } from "@/lib/auth/resolve-actor";
import { SESSION_COOKIE } from "@/lib/auth/sessions";
import { authorize, decide, type Action, type ActionTarget } from "@/lib/auth/policy";
import type { Actor } from "@/lib/auth/actor";
import { readNetworkSettings } from "@/lib/settings/network-settings";
import { needsFirstCoordinator } from "@/lib/auth/create-first-coordinator";
import { assertSameOriginHeaders } from "@/lib/auth/request-actor";

/** The actor of the current page request or server action (cookie session or bearer token). */
export async function currentActor(): Promise<Actor> {
  const [cookieStore, headerList] = await Promise.all([cookies(), headers()]);
  return resolveActor(getDb(), {
    sessionSecret: cookieStore.get(SESSION_COOKIE)?.value ?? null,
    authorization: headerList.get("authorization"),
  });
}

/**
 * For pages: the signed-in actor allowed to do `action`, or a redirect (to first-run setup when
 * the network has no accounts, to sign-in when nobody is signed in, and to the refusal page,
 * which says who may, when the policy refuses a signed-in user).
 */
export async function requirePageActor(action: Action, target: ActionTarget = {}): Promise<Actor> {
  const db = getDb();
  const actor = await currentActor();
  if (actor.kind === "anonymous") {
    if (await needsFirstCoordinator(db)) redirect("/setup");
    redirect("/sign-in");
  }
  if (!decide(actor, action, target, await readNetworkSettings(db)).allowed) redirect(`/refused?action=${encodeURIComponent(action)}`);
  return actor;
}

/**
 * For server actions, which are public endpoints (anyone can POST to them, whatever the page
 * shows): refuses a cross-site POST, then returns the signed-in actor allowed to do `action`.
 * Throws AppError forbidden (cross-site, or the policy's reason) or unauthenticated (nobody
 * signed in); the action turns it into its form's message. Every server action that changes data
 * calls this first. (Next.js compares Origin with Host for server actions too; this is the same
 * check the JSON API makes, so both refuse alike.)
 */
export async function requireActionActor(action: Action, target: ActionTarget = {}): Promise<Actor> {
  assertSameOriginHeaders("POST", await headers());
  const actor = await currentActor();
  authorize(actor, action, target, await readNetworkSettings(getDb()));
  return actor;
}

/** Whether the actor may do `action`, for showing or hiding controls (the server still checks on use). */
export async function mayDo(actor: Actor, action: Action, target: ActionTarget = {}): Promise<boolean> {
  return decide(actor, action, target, await readNetworkSettings(getDb())).allowed;
}
