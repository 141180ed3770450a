import { redirect } from "next/navigation";
import { getDb } from "@/lib/db/client";
import { needsFirstCoordinator } from "@/lib/auth/create-first-coordinator";
import { SetupForm } from "./setup-form";

export const dynamic = "force-dynamic";
export const metadata = { title: "First run" };

export default async function SetupPage() {
  if (!(await needsFirstCoordinator(getDb()))) redirect("/sign-in");
  return (
    <section className="narrow">
      <h1>Set up this network</h1>
      <p className="lede">
        The network has no accounts yet. Create the coordinator account: the coordinator manages sites, accounts,
        moderators and settings, and runs the pooled analyses.
      </p>
      <SetupForm />
    </section>
  );
}
