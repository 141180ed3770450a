import Link from "next/link";
import { notFound } from "next/navigation";
import { getDb } from "@/lib/db/client";
import { getAnalysis } from "@/lib/analyses/analyses";
import { getAnalysisRun } from "@/lib/analyses/run-analysis";
import { parseStoredRun, type StoredRun } from "@/lib/analyses/stored-run";
import { bubbleFigures, forestFigure, funnelFigure, residualFunnelFigure, type ForestSort } from "@/lib/analyses/run-figures";
import { cumulativeOrders, runSensitivity, runTrimAndFill, SENSITIVITY_BY_DEFAULT_MAX_STUDIES, sensitivityShownByDefault, speciesSubgroups } from "@/lib/analyses/run-sensitivity";
import { baujatFigure, cumulativeFigure, influenceFigure, leaveOutFigure, speciesDiamonds } from "@/lib/analyses/sensitivity-figures";
import { jobsInScope } from "@/lib/jobs/job-scope";
import { forestPlotSvg } from "@/lib/plots/forest-plot";
import { funnelPlotSvg } from "@/lib/plots/funnel-plot";
import { bubblePlotSvg } from "@/lib/plots/bubble-plot";
import { refitIntervalPlotSvg } from "@/lib/plots/refit-interval-plot";
import { influencePlotSvg } from "@/lib/plots/influence-plot";
import { scatterFitPlotSvg } from "@/lib/plots/scatter-fit-plot";
import { AppError } from "@/lib/errors/app-error";
import { OUTCOME_LABELS, LEVEL_LABELS } from "@/lib/format/vocabulary-labels";
import { mayDo, requirePageActor } from "../../_server/current-actor";
import { ChartFigure } from "../../_components/chart-figure";
import { RunSummary } from "../../_components/run-summary";
import { JobProgress } from "../../_components/job-progress";
import { Interval, Num, PValue } from "../../_components/numbers";
import { RunButton } from "./run-button";

export const dynamic = "force-dynamic";

const SORTS: ForestSort[] = ["input", "estimate", "weight", "latitude", "warming_rate"];

/** What the results page shows, as query parameters. */
interface View {
  run: number;
  sort: ForestSort;
  group: boolean;
  fill: boolean;
  sensitivity: boolean;
  /** Whether the sensitivity analyses are shown when the address does not say (small runs). */
  sensitivityByDefault: boolean;
  order: string;
  term: string | null;
}

/** Whether the sensitivity analyses are shown: as the address says, else by the run's size. */
function sensitivityView(run: StoredRun, asked: string | undefined): Pick<View, "sensitivity" | "sensitivityByDefault"> {
  const sensitivityByDefault = sensitivityShownByDefault(run);
  return { sensitivity: asked === "on" || (asked !== "off" && sensitivityByDefault), sensitivityByDefault };
}

function viewHref(analysisId: number, view: View, changes: Partial<View> = {}, anchor = ""): string {
  const next = { ...view, ...changes };
  const params = new URLSearchParams({ run: String(next.run) });
  if (next.sort !== "input") params.set("sort", next.sort);
  if (next.group) params.set("group", "species");
  if (next.fill) params.set("fill", "on");
  if (next.sensitivity !== next.sensitivityByDefault) params.set("sensitivity", next.sensitivity ? "on" : "off");
  if (next.order !== "precision") params.set("order", next.order);
  if (next.term) params.set("term", next.term);
  return `/analyses/${analysisId}?${params.toString()}${anchor}`;
}

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
  const [canRun, jobs] = await Promise.all([mayDo(actor, "analysis.run"), jobsInScope(db, { analysisId })]);
  const requestedRun = query.run !== undefined && /^\d{1,10}$/.test(query.run) ? Number(query.run) : undefined;
  const runId = requestedRun ?? analysis.runs[0]?.id;
  const stored = runId ? await getAnalysisRun(db, analysisId, runId).catch((error: unknown) => {
    if (error instanceof AppError && error.code === "not_found") notFound();
    throw error;
  }) : null;
  const run = stored ? parseStoredRun(stored.result) : null;
  const spec = analysis.specification;
  const background = spec.permutationTest !== undefined;
  return (
    <>
      <p className="muted"><Link href="/analyses">Analyses</Link> / {analysis.name}</p>
      <h1>{analysis.name}</h1>
      <p className="lede">
        {OUTCOME_LABELS[spec.outcome]}, {LEVEL_LABELS[spec.level]} {spec.term} term, {spec.grain === "site" ? "one estimate per site" : "one estimate per site and year"};{" "}
        {spec.model.type === "common_effect" ? "common-effect model" : spec.levels.length ? `multilevel model (${spec.levels.join(" / ")}, ${spec.model.tau2Estimator.toUpperCase()})` : `random-effects model (${spec.model.tau2Estimator.toUpperCase()})`}, {spec.test === "hksj" ? "Knapp-Hartung test" : "z test"}
        {spec.robustCluster ? `, cluster-robust (CR2) standard errors by ${spec.robustCluster}` : ""}
        {spec.moderators.length ? `; moderators ${spec.moderators.join(", ")}` : ""}
        {spec.permutationTest ? `; permutation test with ${spec.permutationTest.permutations.toLocaleString("en-GB")} permutations (seed ${spec.permutationTest.seed})` : ""}.
        {spec.description ? ` ${spec.description}` : ""}
      </p>
      <div className="toolbar">
        {canRun ? <RunButton analysisId={analysisId} label={stored ? "Run again on today's data" : "Run"} background={background} /> : null}
        {stored ? <Link href={`/analyses/${analysisId}/report?run=${stored.id}`}>Report</Link> : null}
        {stored ? (
          <span>
            Run {stored.id}, {stored.createdAt.toISOString().slice(0, 16).replace("T", " ")} UTC, engine {stored.engineVersion}{" "}
            {stored.dataChanged ? <span className="badge changed">data changed since this run</span> : <span className="badge accepted">data unchanged</span>}
          </span>
        ) : null}
      </div>
      {background ? <p className="muted">The permutation test makes this analysis long: runs go to the background queue, and this page shows their progress.</p> : null}
      <JobProgress key={jobs.map((j) => `${j.id}:${j.status}`).join(",")} scope={{ analysisId }} initial={jobs} canCancel={canRun} resultHref={`/analyses/${analysisId}?run=`} />
      {analysis.runs.length > 1 ? (
        <p className="muted">
          Earlier runs: {analysis.runs.filter((r) => r.id !== stored?.id).slice(0, 10).map((r, i) => (
            <span key={r.id}>{i ? ", " : ""}<Link href={`/analyses/${analysisId}?run=${r.id}`}>{r.id}</Link></span>
          ))}
        </p>
      ) : null}
      {!run || !stored ? (
        <p className="empty">This analysis has not been run yet.</p>
      ) : (
        <Results
          run={run}
          analysisId={analysisId}
          view={{
            run: stored.id,
            sort: SORTS.includes(query.sort as ForestSort) ? (query.sort as ForestSort) : "input",
            group: query.group === "species",
            fill: query.fill === "on",
            ...sensitivityView(run, query.sensitivity),
            order: cumulativeOrders(run).some((o) => o.key === query.order) ? query.order! : "precision",
            term: run.fit.coefficients.some((c) => c.term === query.term) ? query.term! : null,
          }}
        />
      )}
    </>
  );
}

function Results({ run, analysisId, view }: { run: StoredRun; analysisId: number; view: View }) {
  const subgroups = view.group ? speciesSubgroups(run) : null;
  const forest = forestFigure(run, { sort: view.sort, groupBySpecies: view.group, ...(subgroups?.available ? { groupSummaries: speciesDiamonds(subgroups.result) } : {}) });
  const trimFill = view.fill ? runTrimAndFill(run) : null;
  const funnel = funnelFigure(run, trimFill?.available ? trimFill.result.filled.map((f) => ({ estimate: f.estimate, standardError: f.standardError })) : []);
  const residualFunnel = funnel ? null : residualFunnelFigure(run);
  const bubbles = bubbleFigures(run);
  const href = (changes: Partial<View>, anchor = "") => viewHref(analysisId, view, changes, anchor);
  return (
    <>
      <h2>Results</h2>
      <RunSummary run={run} />
      <h2 id="forest">Forest plot</h2>
      <nav className="toolbar" aria-label="Forest plot order">
        <span>Order:</span>
        {SORTS.map((s) => (
          <Link key={s} href={href({ sort: s }, "#forest")} aria-current={s === view.sort ? "true" : undefined}>{s === "input" ? "site" : s.replace("_", " ")}</Link>
        ))}
        <Link href={href({ group: !view.group }, "#forest")}>{view.group ? "ungroup" : "group by species"}</Link>
      </nav>
      {subgroups && !subgroups.available ? <p className="muted">No species diamonds: {subgroups.reason}.</p> : null}
      {subgroups?.available ? (
        <p className="muted">
          Diamonds: each species pooled {subgroups.result.tau2 === "separate" ? "with its own tau²" : "with one tau² common to all species (a species has a single estimate)"}, same estimator and test.
          Test of differences between species: {subgroups.result.test.distribution === "F" ? `F(${subgroups.result.test.df}, ${subgroups.result.test.denominatorDf})` : `chi²(${subgroups.result.test.df})`} = <Num value={subgroups.result.test.statistic} />, p <PValue p={subgroups.result.test.pValue} />.
        </p>
      ) : null}
      <ChartFigure svg={forestPlotSvg(forest.input)} csv={forest.csv} fileName={forest.fileName} caption={`Forest plot: ${forest.input.rows.length} estimates`} />
      {funnel ? (
        <>
          <h2 id="funnel">Funnel plot</h2>
          <nav className="toolbar" aria-label="Funnel plot options">
            <Link href={href({ fill: !view.fill }, "#funnel")}>{view.fill ? "hide trim-and-fill" : "show trim-and-fill"}</Link>
          </nav>
          {trimFill && !trimFill.available ? <p className="muted">Trim-and-fill cannot be computed: {trimFill.reason}.</p> : null}
          {trimFill?.available ? (
            <p>
              Trim-and-fill ({trimFill.result.estimator.toUpperCase()}, missing estimates assumed on the {trimFill.result.side}, {trimFill.result.sideChosenBy === "data" ? "from the sign of Egger's intercept" : "as given"}):{" "}
              {trimFill.result.k0} estimate{trimFill.result.k0 === 1 ? "" : "s"} imputed (hollow); pooled estimate with them <Num value={trimFill.result.adjusted.coefficients[0]!.estimate} />{" "}
              <Interval lower={trimFill.result.adjusted.coefficients[0]!.ciLower} upper={trimFill.result.adjusted.coefficients[0]!.ciUpper} />, against <Num value={trimFill.result.original.coefficients[0]!.estimate} /> without.{" "}
              <span className="muted">{trimFill.result.notes.join(" ")}</span>
            </p>
          ) : null}
          <ChartFigure svg={funnelPlotSvg(funnel.input)} csv={funnel.csv} fileName={funnel.fileName} caption={`Funnel plot with significance contours${trimFill?.available ? " and trim-and-fill" : ""}`} />
        </>
      ) : null}
      {residualFunnel ? (
        <>
          <h2 id="funnel">Funnel plot of the residuals</h2>
          <p className="muted">A meta-regression has no single pooled value: each estimate is shown as its residual from the fitted line, against its standard error. Trim-and-fill applies to a pooled estimate only.</p>
          <ChartFigure svg={funnelPlotSvg(residualFunnel.input)} csv={residualFunnel.csv} fileName={residualFunnel.fileName} caption="Funnel plot of the meta-regression residuals" />
        </>
      ) : null}
      {bubbles.map((b) => (
        <section key={b.fileName}>
          <h2>Bubble plot: {b.input.moderatorLabel}</h2>
          <ChartFigure svg={bubblePlotSvg(b.input)} csv={b.csv} fileName={b.fileName} caption={`Estimates against ${b.input.moderatorLabel}, area proportional to weight`} />
          <p className="muted">Across sites this is an association between sites, not an effect within a site.</p>
        </section>
      ))}
      <h2 id="sensitivity">Sensitivity analyses</h2>
      {view.sensitivity ? (
        <Sensitivity run={run} view={view} href={href} />
      ) : (
        <p>
          <Link href={href({ sensitivity: true }, "#sensitivity")} className="button-link">Show leave-one-out, influence and cumulative plots</Link>{" "}
          <span className="muted">
            {view.sensitivityByDefault
              ? "Hidden on request."
              : `Refits the run's model about ${4 * run.selection.studies.length} times (${run.selection.studies.length} estimates, more than ${SENSITIVITY_BY_DEFAULT_MAX_STUDIES} are computed only on request): a few seconds.`}
          </span>
        </p>
      )}
    </>
  );
}

function Sensitivity({ run, view, href }: { run: StoredRun; view: View; href: (changes: Partial<View>, anchor?: string) => string }) {
  const terms = run.fit.coefficients.map((c) => c.term);
  const term = view.term ?? (terms.length > 1 ? terms[1]! : terms[0]!);
  const termIndex = terms.indexOf(term);
  const sensitivity = runSensitivity(run, view.order);
  const orders = cumulativeOrders(run);
  return (
    <>
      <nav className="toolbar" aria-label="Sensitivity options">
        <Link href={href({ sensitivity: false }, "#sensitivity")}>hide</Link>
        {terms.length > 1 ? (
          <>
            <span>Coefficient:</span>
            {terms.map((t) => <Link key={t} href={href({ term: t }, "#sensitivity")} aria-current={t === term ? "true" : undefined}>{t}</Link>)}
          </>
        ) : null}
      </nav>
      <h3>Leave-one-out</h3>
      {sensitivity.leaveOut.available ? (
        (() => {
          const figure = leaveOutFigure(run, sensitivity.leaveOut.result, termIndex);
          return <ChartFigure svg={refitIntervalPlotSvg(figure.input)} csv={figure.csv} fileName={figure.fileName} caption={`Leave-one-out: the ${term === "intercept" && terms.length === 1 ? "pooled estimate" : `coefficient of ${term}`} refitted without each ${sensitivity.leaveOut.result.by === "group" ? "site" : "estimate"}`} />;
        })()
      ) : <p className="empty">Leave-one-out cannot be computed: {sensitivity.leaveOut.reason}.</p>}
      <h3>Influence</h3>
      {sensitivity.influence.available ? (
        (() => {
          const influence = influenceFigure(run, sensitivity.influence.result);
          const baujat = baujatFigure(run, sensitivity.influence.result);
          const flagged = sensitivity.influence.result.studies.filter((s) => s.influential || s.outlier);
          return (
            <>
              <p className="muted">
                Case-deletion diagnostics with tau² re-estimated (Viechtbauer &amp; Cheung 2010); thresholds are rules of thumb (common practice).{" "}
                {flagged.length ? `Flagged: ${flagged.map((s) => `${s.label} (${s.flaggedBy.join(", ").replace(/_/g, " ")})`).join("; ")}.` : "No estimate is flagged."}
              </p>
              <ChartFigure svg={influencePlotSvg(influence.input)} csv={influence.csv} fileName={influence.fileName} caption="Influence plot: studentized deleted residuals, DFFITS, Cook's distances and hat values" />
              <ChartFigure svg={scatterFitPlotSvg(baujat.input)} csv={baujat.csv} fileName={baujat.fileName} caption="Baujat plot: contribution to heterogeneity against influence" />
            </>
          );
        })()
      ) : <p className="empty">Influence diagnostics cannot be computed: {sensitivity.influence.reason}.</p>}
      <h3 id="cumulative">Cumulative meta-analysis</h3>
      <nav className="toolbar" aria-label="Cumulative order">
        <span>Add estimates:</span>
        {orders.map((o) => <Link key={o.key} href={href({ order: o.key }, "#cumulative")} aria-current={o.key === view.order ? "true" : undefined}>{o.label}</Link>)}
      </nav>
      {sensitivity.cumulative.available ? (
        (() => {
          const figure = cumulativeFigure(run, sensitivity.cumulative.result, termIndex, sensitivity.order, sensitivity.labels);
          return <ChartFigure svg={refitIntervalPlotSvg(figure.input)} csv={figure.csv} fileName={figure.fileName} caption={`Cumulative meta-analysis, ${sensitivity.order.label}`} />;
        })()
      ) : <p className="empty">The cumulative analysis cannot be computed: {sensitivity.cumulative.reason}.</p>}
      {[...(sensitivity.leaveOut.available ? sensitivity.leaveOut.result.warnings : []), ...(sensitivity.cumulative.available ? sensitivity.cumulative.result.warnings : []), ...(sensitivity.influence.available ? sensitivity.influence.result.warnings : [])].map((w, i) => (
        <p key={i} className="muted">Note: {w.message}.</p>
      ))}
    </>
  );
}
