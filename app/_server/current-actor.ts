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
 * the network has no accounts, to sign-in when nobody is signed in). Refusals for signed-in users
 * throw the policy's reason.
 */
export async function requirePageActor(action: Action, target: ActionTarget = {}): Promise<Actor> {
  const db = getDb();
  const actor = await currentActor();
  if (actor.kind === "anonymous") {
    if (await needsFirstCoordinator(db)) redirect("/setup");
    redirect("/sign-in");
  }
  authorize(actor, action, target, await readNetworkSettings(db));
  return actor;
}

/** Whether the actor may do `action`, for showing or hiding controls (the server still checks on use). */
export async function mayDo(actor: Actor, action: Action, target: ActionTarget = {}): Promise<boolean> {
  return decide(actor, action, target, await readNetworkSettings(getDb())).allowed;
}
