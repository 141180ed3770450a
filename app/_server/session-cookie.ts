import "server-only";
import { cookies, headers } from "next/headers";
import { SESSION_COOKIE } from "@/lib/auth/sessions";

/** Whether this request reached us over HTTPS (directly or through a proxy that says so). */
async function servedOverHttps(): Promise<boolean> {
  const headerList = await headers();
  const forwarded = headerList.get("x-forwarded-proto");
  return forwarded ? forwarded.split(",")[0]!.trim() === "https" : false;
}

export async function setSessionCookie(secret: string, expiresAt: Date): Promise<void> {
  const store = await cookies();
  store.set(SESSION_COOKIE, secret, { httpOnly: true, sameSite: "lax", secure: await servedOverHttps(), path: "/", expires: expiresAt });
}

export async function readSessionCookie(): Promise<string | undefined> {
  return (await cookies()).get(SESSION_COOKIE)?.value;
}

export async function clearSessionCookie(): Promise<void> {
  (await cookies()).delete(SESSION_COOKIE);
}

/** The client's address for rate limiting: the first X-Forwarded-For hop, else "direct". */
export async function clientAddress(): Promise<string> {
  const headerList = await headers();
  return headerList.get("x-forwarded-for")?.split(",")[0]?.trim() || headerList.get("x-real-ip") || "direct";
}
