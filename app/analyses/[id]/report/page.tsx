import Link from "next/link";
import { notFound } from "next/navigation";
import { getDb } from "@/lib/db/client";
import { getAnalysis } from "@/lib/analyses/analyses";
import { getAnalysisRun } from "@/lib/analyses/run-analysis";
import { parseStoredRun } from "@/lib/analyses/stored-run";
import { bubbleFigures, forestFigure, funnelFigure } from "@/lib/analyses/run-figures";
import { reportContent } from "@/lib/analyses/report-content";
import { forestPlotSvg } from "@/lib/plots/forest-plot";
import { funnelPlotSvg } from "@/lib/plots/funnel-plot";
import { bubblePlotSvg } from "@/lib/plots/bubble-plot";
import { AppError } from "@/lib/errors/app-error";
import { requirePageActor } from "../../../_server/current-actor";
import { RunSummary } from "../../../_components/run-summary";

export const dynamic = "force-dynamic";
export const metadata = { title: "Report" };

export default async function ReportPage({ params, searchParams }: { params: Promise<{ id: string }>; searchParams: Promise<Record<string, string | undefined>> }) {
  await requirePageActor("pooled_results.read");
  const analysisId = Number((await params).id);
  const query = await searchParams;
  if (!Number.isInteger(analysisId) || analysisId <= 0 || analysisId > 2 ** 31 - 1) notFound();
  const db = getDb();
  const analysis = await getAnalysis(db, analysisId).catch((error: unknown) => {
    if (error instanceof AppError && error.code === "not_found") notFound();
    throw error;
  });
  const runId = query.run ? Number(query.run) : analysis.runs[0]?.id;
  if (!runId) {
    return (
      <>
        <h1>Report: {analysis.name}</h1>
        <p className="empty">Run the analysis first; the report describes one run.</p>
      </>
    );
  }
  const view = await getAnalysisRun(db, analysisId, runId);
  const run = parseStoredRun(view.result);
  const content = reportContent(run, { engineVersion: view.engineVersion, runId: view.id, createdAt: view.createdAt });
  const forest = forestFigure(run, { sort: "estimate" });
  const funnel = funnelFigure(run);
  const bubbles = bubbleFigures(run);
  let figureNumber = 0;
  const figure = (svg: string, caption: string) => {
    figureNumber += 1;
    return (
      <figure className="chart report-figure" key={figureNumber}>
        <div className="chart-scroll" tabIndex={0} role="group" aria-label={`Figure ${figureNumber} (scrolls)`} dangerouslySetInnerHTML={{ __html: svg }} />
        <figcaption>Figure {figureNumber}. {caption}</figcaption>
      </figure>
    );
  };
  return (
    <article className="report">
      <p className="muted no-print"><Link href={`/analyses/${analysisId}?run=${runId}`}>Back to the analysis</Link> · print this page or save it as PDF from the browser.</p>
      <h1>{analysis.name}</h1>
      {view.dataChanged ? <p className="notice" role="note">The network&apos;s data have changed since this run: re-run the analysis before reporting.</p> : null}
      <h2>Methods</h2>
      <p>{content.methods}</p>
      <h2>Results</h2>
      <RunSummary run={run} />
      <h2>Figures</h2>
      {figure(forestPlotSvg(forest.input), `Forest plot of the ${forest.input.rows.length} estimates, ordered by estimate; squares sized by weight, ${Math.round(run.fit.model.confidence_level * 100)}% confidence intervals.`)}
      {funnel ? figure(funnelPlotSvg(funnel.input), "Contour-enhanced funnel plot (Peters et al. 2008).") : null}
      {bubbles.map((b) => figure(bubblePlotSvg(b.input), `Estimates against ${b.input.moderatorLabel}; bubble area proportional to weight, fitted line with its confidence band.`))}
      <h2>Reporting checklist</h2>
      <p className="muted">Items of the PRISMA-EcoEvo reporting guideline (O&apos;Dea et al. 2021) this analysis can fill, in our words.</p>
      <table className="data">
        <thead><tr><th scope="col">Topic</th><th scope="col">Status</th><th scope="col">From this run</th></tr></thead>
        <tbody>
          {content.items.map((item) => (
            <tr key={item.topic}><td>{item.topic}</td><td><span className={`badge ${item.status === "filled" ? "accepted" : "changed"}`}>{item.status}</span></td><td>{item.text}</td></tr>
          ))}
        </tbody>
      </table>
      <h2>Cautions</h2>
      <ul>{content.cautions.map((c) => <li key={c}>{c}</li>)}</ul>
      <h2>References</h2>
      <ul className="references">{run.fit.model.references.map((r) => <li key={r}>{r}</li>)}</ul>
    </article>
  );
}
