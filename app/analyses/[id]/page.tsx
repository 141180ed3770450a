import Link from "next/link";
import { notFound } from "next/navigation";
import { getDb } from "@/lib/db/client";
import { getAnalysis } from "@/lib/analyses/analyses";
import { getAnalysisRun } from "@/lib/analyses/run-analysis";
import { parseStoredRun } from "@/lib/analyses/stored-run";
import { bubbleFigures, forestFigure, funnelFigure, type ForestSort } from "@/lib/analyses/run-figures";
import { forestPlotSvg } from "@/lib/plots/forest-plot";
import { funnelPlotSvg } from "@/lib/plots/funnel-plot";
import { bubblePlotSvg } from "@/lib/plots/bubble-plot";
import { AppError } from "@/lib/errors/app-error";
import { OUTCOME_LABELS, LEVEL_LABELS } from "@/lib/format/vocabulary-labels";
import { mayDo, requirePageActor } from "../../_server/current-actor";
import { ChartFigure } from "../../_components/chart-figure";
import { RunSummary } from "../../_components/run-summary";
import { RunButton } from "./run-button";

export const dynamic = "force-dynamic";

const SORTS: ForestSort[] = ["input", "estimate", "weight", "latitude", "warming_rate"];

export default async function AnalysisPage({ params, searchParams }: { params: Promise<{ id: string }>; searchParams: Promise<Record<string, string | undefined>> }) {
  const actor = await requirePageActor("pooled_results.read");
  const { id } = await params;
  const query = await searchParams;
  const analysisId = Number(id);
  if (!Number.isInteger(analysisId) || analysisId <= 0 || analysisId > 2 ** 31 - 1) notFound();
  const db = getDb();
  const analysis = await getAnalysis(db, analysisId).catch((error: unknown) => {
    if (error instanceof AppError && error.code === "not_found") notFound();
    throw error;
  });
  const canRun = await mayDo(actor, "analysis.run");
  const runId = query.run ? Number(query.run) : analysis.runs[0]?.id;
  const view = runId ? await getAnalysisRun(db, analysisId, runId) : null;
  const run = view ? parseStoredRun(view.result) : null;
  const sort = SORTS.includes(query.sort as ForestSort) ? (query.sort as ForestSort) : "input";
  const groupBySpecies = query.group === "species";
  const spec = analysis.specification;
  return (
    <>
      <p className="muted"><Link href="/analyses">Analyses</Link> / {analysis.name}</p>
      <h1>{analysis.name}</h1>
      <p className="lede">
        {OUTCOME_LABELS[spec.outcome]}, {LEVEL_LABELS[spec.level]} {spec.term} term, {spec.grain === "site" ? "one estimate per site" : "one estimate per site and year"};{" "}
        {spec.model.type === "common_effect" ? "common-effect model" : `random-effects model (${spec.model.tau2Estimator.toUpperCase()})`}, {spec.test === "hksj" ? "Knapp-Hartung test" : "z test"}
        {spec.moderators.length ? `; moderators ${spec.moderators.join(", ")}` : ""}.
        {spec.description ? ` ${spec.description}` : ""}
      </p>
      <div className="toolbar">
        {canRun ? <RunButton analysisId={analysisId} label={view ? "Run again on today's data" : "Run"} /> : null}
        {view ? <Link href={`/analyses/${analysisId}/report?run=${view.id}`}>Report</Link> : null}
        {view ? (
          <span>
            Run {view.id}, {view.createdAt.toISOString().slice(0, 16).replace("T", " ")} UTC, engine {view.engineVersion}{" "}
            {view.dataChanged ? <span className="badge changed">data changed since this run</span> : <span className="badge accepted">data unchanged</span>}
          </span>
        ) : null}
      </div>
      {analysis.runs.length > 1 ? (
        <p className="muted">
          Earlier runs: {analysis.runs.filter((r) => r.id !== view?.id).slice(0, 10).map((r, i) => (
            <span key={r.id}>{i ? ", " : ""}<Link href={`/analyses/${analysisId}?run=${r.id}`}>{r.id}</Link></span>
          ))}
        </p>
      ) : null}
      {!run ? (
        <p className="empty">This analysis has not been run yet.</p>
      ) : (
        <Results run={run} sort={sort} groupBySpecies={groupBySpecies} analysisId={analysisId} runId={view!.id} />
      )}
    </>
  );
}

function Results({ run, sort, groupBySpecies, analysisId, runId }: { run: ReturnType<typeof parseStoredRun>; sort: ForestSort; groupBySpecies: boolean; analysisId: number; runId: number }) {
  const forest = forestFigure(run, { sort, groupBySpecies });
  const funnel = funnelFigure(run);
  const bubbles = bubbleFigures(run);
  const base = `/analyses/${analysisId}?run=${runId}`;
  return (
    <>
      <h2>Results</h2>
      <RunSummary run={run} />
      <h2>Forest plot</h2>
      <nav className="toolbar" aria-label="Forest plot order">
        <span>Order:</span>
        {SORTS.map((s) => (
          <Link key={s} href={`${base}&sort=${s}${groupBySpecies ? "&group=species" : ""}`} aria-current={s === sort ? "true" : undefined}>
            {s === "input" ? "site" : s.replace("_", " ")}
          </Link>
        ))}
        <Link href={`${base}&sort=${sort}${groupBySpecies ? "" : "&group=species"}`}>{groupBySpecies ? "ungroup" : "group by species"}</Link>
      </nav>
      <ChartFigure svg={forestPlotSvg(forest.input)} csv={forest.csv} fileName={forest.fileName} caption={`Forest plot: ${forest.input.rows.length} estimates`} />
      {funnel ? (
        <>
          <h2>Funnel plot</h2>
          <ChartFigure svg={funnelPlotSvg(funnel.input)} csv={funnel.csv} fileName={funnel.fileName} caption="Funnel plot with significance contours" />
        </>
      ) : null}
      {bubbles.map((b) => (
        <section key={b.fileName}>
          <h2>Bubble plot: {b.input.moderatorLabel}</h2>
          <ChartFigure svg={bubblePlotSvg(b.input)} csv={b.csv} fileName={b.fileName} caption={`Estimates against ${b.input.moderatorLabel}, area proportional to weight`} />
          <p className="muted">Across sites this is an association between sites, not an effect within a site.</p>
        </section>
      ))}
    </>
  );
}
