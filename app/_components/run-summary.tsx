import type { StoredRun } from "@/lib/analyses/stored-run";
import { formatPValue, formatSignificant } from "@/lib/format/numbers";

/** The results tables of a run: pooled estimate or coefficients, heterogeneity, tests, and numbered notes. */
export function RunSummary({ run }: { run: StoredRun }) {
  const { fit } = run;
  const level = Math.round(fit.model.confidence_level * 100);
  const h = fit.heterogeneity;
  const statisticName = fit.model.test_df === null ? "z" : "t";
  const notes = [...fit.warnings.map((w) => w.message), ...(h.ci_note ? [h.ci_note] : []), ...(fit.prediction_note ? [fit.prediction_note] : []), ...run.selection.notes];
  const interceptOnly = fit.coefficients.length === 1;
  return (
    <>
      <div className="summary-grid" aria-label="Summary">
        {interceptOnly ? (
          <div>
            <span className="label">Pooled estimate [{level}% CI]</span>
            <span className="figure" title={String(fit.coefficients[0]!.estimate)}>
              {formatSignificant(fit.coefficients[0]!.estimate)} [{formatSignificant(fit.coefficients[0]!.ci_lower, 3)}, {formatSignificant(fit.coefficients[0]!.ci_upper, 3)}]
            </span>
            <span className="label">SE {formatSignificant(fit.coefficients[0]!.se, 3)}, p {formatPValue(fit.coefficients[0]!.p_value)}</span>
          </div>
        ) : null}
        {interceptOnly ? (
          <div>
            <span className="label">{level}% prediction interval (a new site)</span>
            <span className="figure">{fit.prediction_interval ? `[${formatSignificant(fit.prediction_interval[0]!, 3)}, ${formatSignificant(fit.prediction_interval[1]!, 3)}]` : "not available"}</span>
          </div>
        ) : null}
        <div>
          <span className="label">tau² ({h.scope === "residual" ? "residual" : "between sites"}) [{level}% CI, Q-profile]</span>
          <span className="figure" title={String(h.tau2)}>
            {formatSignificant(h.tau2, 3)} {h.tau2_ci ? `[${formatSignificant(h.tau2_ci[0]!, 3)}, ${formatSignificant(h.tau2_ci[1]!, 3)}]` : ""}
          </span>
        </div>
        <div>
          <span className="label">I² [{level}% CI]</span>
          <span className="figure">{h.i2.toFixed(1)}% {h.i2_ci ? `[${h.i2_ci[0]!.toFixed(1)}, ${h.i2_ci[1]!.toFixed(1)}]` : ""}</span>
        </div>
        <div>
          <span className="label">Q test of heterogeneity</span>
          <span className="figure">Q = {formatSignificant(h.q, 4)}, df {h.q_df}, p {formatPValue(h.q_p)}</span>
        </div>
        <div>
          <span className="label">Model</span>
          <span className="figure">{fit.model.k} estimates</span>
          <span className="label">{fit.model.method_name}; {fit.model.test_name}</span>
        </div>
      </div>
      <table className="data" aria-label="Coefficients">
        <caption>{interceptOnly ? "Pooled estimate" : "Meta-regression coefficients"} ({fit.model.test_name})</caption>
        <thead>
          <tr><th scope="col">Term</th><th scope="col" className="num">Estimate</th><th scope="col" className="num">SE</th><th scope="col" className="num">{statisticName}</th><th scope="col" className="num">p</th><th scope="col" className="num">{level}% CI</th></tr>
        </thead>
        <tbody>
          {fit.coefficients.map((c) => (
            <tr key={c.term}>
              <td>{c.term}</td>
              <td className="num" title={String(c.estimate)}>{formatSignificant(c.estimate)}</td>
              <td className="num" title={String(c.se)}>{formatSignificant(c.se, 3)}</td>
              <td className="num">{c.statistic.toFixed(2)}</td>
              <td className="num" title={String(c.p_value)}>{formatPValue(c.p_value)}</td>
              <td className="num">[{formatSignificant(c.ci_lower, 3)}, {formatSignificant(c.ci_upper, 3)}]</td>
            </tr>
          ))}
        </tbody>
      </table>
      {fit.moderators_test ? (
        <p>
          Test of moderators ({fit.moderators_test.terms.join(", ")}): {fit.moderators_test.distribution === "F" ? `F(${fit.moderators_test.df}, ${fit.moderators_test.df2})` : `chi²(${fit.moderators_test.df})`} ={" "}
          {formatSignificant(fit.moderators_test.statistic, 4)}, p {formatPValue(fit.moderators_test.p_value)}.
          {fit.residual_heterogeneity ? ` Residual heterogeneity Q_E = ${formatSignificant(fit.residual_heterogeneity.q, 4)}, df ${fit.residual_heterogeneity.df}, p ${formatPValue(fit.residual_heterogeneity.p_value)}.` : ""}
          {fit.r2 !== null ? ` Pseudo-R² = ${(fit.r2 * 100).toFixed(1)}% of tau² explained.` : ""}
        </p>
      ) : null}
      <p className="muted">Fit: {fit.fit.converged ? `converged after ${fit.fit.iterations} iterations` : "did not converge"}; {fit.fit.log_likelihood_kind} log-likelihood {formatSignificant(fit.fit.log_likelihood, 6)}.</p>
      {notes.length ? (
        <>
          <h3>Notes</h3>
          <ol className="notes">{notes.map((note, i) => <li key={i}>{note}</li>)}</ol>
        </>
      ) : null}
      {run.selection.excluded.length ? (
        <details>
          <summary>{run.selection.excluded.length} matching estimates left out</summary>
          <ul>{run.selection.excluded.map((e) => <li key={e.estimateId}>{e.siteCode}{e.year === null ? "" : ` ${e.year}`}: {e.reason}</li>)}</ul>
        </details>
      ) : null}
    </>
  );
}
