import Link from "next/link";
import { getDb } from "@/lib/db/client";
import { listAnalyses } from "@/lib/analyses/analyses";
import { OUTCOME_LABELS, LEVEL_LABELS } from "@/lib/format/vocabulary-labels";
import { mayDo, requirePageActor } from "../_server/current-actor";

export const dynamic = "force-dynamic";
export const metadata = { title: "Analyses" };

export default async function AnalysesPage() {
  const actor = await requirePageActor("pooled_results.read");
  const [analyses, canSave] = await Promise.all([listAnalyses(getDb()), mayDo(actor, "analysis.save")]);
  return (
    <>
      <h1>Analyses</h1>
      <p className="lede">Saved pooled analyses of the network&apos;s estimates. Each run is kept with the data it read, so a result can be traced to the submissions behind it.</p>
      {canSave ? <p><Link href="/analyses/new" className="button-link">New analysis</Link></p> : null}
      {analyses.length === 0 ? (
        <p className="empty">No analyses saved yet.</p>
      ) : (
        <table className="data">
          <thead>
            <tr><th scope="col">Name</th><th scope="col">Outcome</th><th scope="col">Level and term</th><th scope="col">Model</th><th scope="col">Moderators</th><th scope="col" className="num">Runs</th><th scope="col">Last run</th></tr>
          </thead>
          <tbody>
            {analyses.map((a) => (
              <tr key={a.id}>
                <td><Link href={`/analyses/${a.id}`}>{a.name}</Link></td>
                <td>{OUTCOME_LABELS[a.specification.outcome]}</td>
                <td>{LEVEL_LABELS[a.specification.level]}, {a.specification.term}</td>
                <td>{a.specification.model.type === "common_effect" ? "common effect" : a.specification.levels.length ? `multilevel: ${a.specification.levels.join(" / ")} (${a.specification.model.tau2Estimator.toUpperCase()})` : `random effects (${a.specification.model.tau2Estimator.toUpperCase()})`}, {a.specification.test === "hksj" ? "HKSJ" : "z"}{a.specification.robustCluster ? `, CR2 by ${a.specification.robustCluster}` : ""}{a.specification.permutationTest ? `, ${a.specification.permutationTest.permutations} permutations` : ""}</td>
                <td>{a.specification.moderators.join(", ") || "none"}</td>
                <td className="num">{a.runs.length}</td>
                <td>{a.runs[0] ? a.runs[0].createdAt.toISOString().slice(0, 16).replace("T", " ") : "never"}</td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
    </>
  );
}
