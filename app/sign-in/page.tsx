import { redirect } from "next/navigation";
import { getDb } from "@/lib/db/client";
import { needsFirstCoordinator } from "@/lib/auth/create-first-coordinator";
import { readNetworkSettings } from "@/lib/settings/network-settings";
import { SignInForm } from "./sign-in-form";

export const dynamic = "force-dynamic";
export const metadata = { title: "Sign in" };

export default async function SignInPage() {
  const db = getDb();
  if (await needsFirstCoordinator(db)) redirect("/setup");
  const demo = (await readNetworkSettings(db)).demo_network;
  return (
    <section className="narrow">
      <h1>Sign in</h1>
      {demo ? (
        <p className="notice" role="note">
          This is the <strong>demo network</strong>: invented sites and simulated birds. The demo accounts and their passwords
          were printed in the terminal when the demo started (<code>npm run seed</code> prints them again with <code>-- --accounts</code>).
        </p>
      ) : null}
      <SignInForm />
    </section>
  );
}
