import { getDb } from "@/lib/db/client";
import { listModerators } from "@/lib/network/moderators";
import { requirePageActor } from "../../_server/current-actor";
import { BuilderForm } from "./builder-form";

export const dynamic = "force-dynamic";
export const metadata = { title: "New analysis" };

export default async function NewAnalysisPage() {
  await requirePageActor("analysis.save");
  const db = getDb();
  const [moderators, species] = await Promise.all([listModerators(db), db.species.findMany({ orderBy: { scientificName: "asc" } })]);
  return (
    <>
      <h1>New analysis</h1>
      <p className="lede">Choose the estimates to pool, the model and any moderators. Saving does not run it: the analysis page runs it on today&apos;s data.</p>
      <BuilderForm options={{ moderators, species: species.map((s) => ({ scientificName: s.scientificName, commonName: s.commonName })) }} />
    </>
  );
}
