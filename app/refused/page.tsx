import Link from "next/link";
import { ACTION_ACCESS, ACTIONS, type Action } from "@/lib/auth/policy";
import { currentActor } from "../_server/current-actor";

export const dynamic = "force-dynamic";
export const metadata = { title: "Not for this account" };

const isAction = (value: unknown): value is Action => typeof value === "string" && (ACTIONS as readonly string[]).includes(value);

/** Where a page sends a signed-in user the policy does not let in: says who may, and nothing more. */
export default async function RefusedPage({ searchParams }: { searchParams: Promise<Record<string, string | string[] | undefined>> }) {
  const actor = await currentActor();
  const { action } = await searchParams;
  return (
    <section className="narrow">
      <h1>Not for this account</h1>
      <p className="lede">
        {actor.kind === "user" ? `You are signed in as ${actor.label.replace(/ <.*>$/, "")} (${actor.role?.replace("_", " ")}). ` : ""}
        {isAction(action) ? `That page is for ${ACTION_ACCESS[action]}.` : "That page is not open to this account."} Ask the network&apos;s
        coordinator if you need it.
      </p>
      <p><Link href="/">Back to the network</Link></p>
    </section>
  );
}
