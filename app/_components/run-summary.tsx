import type { StoredRun } from "@/lib/analyses/stored-run";
import { Num, PValue } from "./numbers";

/** The results tables of a run: pooled estimate or coefficients, heterogeneity, tests, and numbered notes. */
export function RunSummary({ run }: { run: StoredRun }) {
  const { fit } = run;
  const level = Math.round(fit.model.confidence_level * 100);
  const h = fit.heterogeneity;
  const statisticName = fit.model.test_df === null ? "z" : "t";
  const notes = [...fit.warnings.map((w) => w.message), ...(h.ci_note ? [h.ci_note] : []), ...(fit.prediction_note ? [fit.prediction_note] : []), ...run.selection.notes];
  const interceptOnly = fit.coefficients.length === 1;
  const permutation = fit.permutation_test ?? null;
  const components = fit.variance_components ?? null;
  const robust = fit.robust ?? null;
  return (
    <>
      <div className="summary-grid" aria-label="Summary">
        {interceptOnly ? (
          <div>
            <span className="label">Pooled estimate [{level}% CI]</span>
            <span className="figure">
              <Num value={fit.coefficients[0]!.estimate} /> [<Num value={fit.coefficients[0]!.ci_lower} digits={3} />, <Num value={fit.coefficients[0]!.ci_upper} digits={3} />]
            </span>
            <span className="label">SE <Num value={fit.coefficients[0]!.se} digits={3} />, p <PValue p={fit.coefficients[0]!.p_value} /></span>
          </div>
        ) : null}
        {interceptOnly ? (
          <div>
            <span className="label">{level}% prediction interval (a new site)</span>
            <span className="figure">{fit.prediction_interval ? <>[<Num value={fit.prediction_interval[0]!} digits={3} />, <Num value={fit.prediction_interval[1]!} digits={3} />]</> : "not available"}</span>
          </div>
        ) : null}
        {components ? (
          <div>
            <span className="label">Total I² (multilevel)</span>
            <span className="figure">{fit.multilevel ? `${fit.multilevel.total_i2.toFixed(1)}%` : "—"}</span>
            <span className="label">variance by level in the table below</span>
          </div>
        ) : (
          <>
            <div>
              <span className="label">tau² ({h.scope === "residual" ? "residual" : "between sites"}) [{level}% CI, Q-profile]</span>
              <span className="figure">
                <Num value={h.tau2} digits={3} /> {h.tau2_ci ? <>[<Num value={h.tau2_ci[0]!} digits={3} />, <Num value={h.tau2_ci[1]!} digits={3} />]</> : ""}
              </span>
            </div>
            <div>
              <span className="label">I² [{level}% CI]</span>
              <span className="figure">{h.i2.toFixed(1)}% {h.i2_ci ? `[${h.i2_ci[0]!.toFixed(1)}, ${h.i2_ci[1]!.toFixed(1)}]` : ""}</span>
            </div>
          </>
        )}
        <div>
          <span className="label">Q test of heterogeneity</span>
          <span className="figure">Q = <Num value={h.q} digits={4} />, df {h.q_df}, p <PValue p={h.q_p} /></span>
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
          <tr><th scope="col">Term</th><th scope="col" className="num">Estimate</th><th scope="col" className="num">SE</th><th scope="col" className="num">{statisticName}</th><th scope="col" className="num">p</th><th scope="col" className="num">{level}% CI</th>{permutation ? <th scope="col" className="num">permutation p</th> : null}</tr>
        </thead>
        <tbody>
          {fit.coefficients.map((c) => (
            <tr key={c.term}>
              <td>{c.term}</td>
              <td className="num"><Num value={c.estimate} /></td>
              <td className="num"><Num value={c.se} digits={3} /></td>
              <td className="num">{c.statistic.toFixed(2)}</td>
              <td className="num"><PValue p={c.p_value} /></td>
              <td className="num">[<Num value={c.ci_lower} digits={3} />, <Num value={c.ci_upper} digits={3} />]</td>
              {permutation ? <td className="num">{permutation.coefficient_p_values[c.term] === undefined ? "—" : <PValue p={permutation.coefficient_p_values[c.term]!} />}</td> : null}
            </tr>
          ))}
        </tbody>
      </table>
      {fit.moderators_test ? (
        <p>
          Test of moderators ({fit.moderators_test.terms.join(", ")}): {fit.moderators_test.distribution === "F" ? `F(${fit.moderators_test.df}, ${fit.moderators_test.df2})` : `chi²(${fit.moderators_test.df})`} ={" "}
          <Num value={fit.moderators_test.statistic} digits={4} />, p <PValue p={fit.moderators_test.p_value} />.
          {fit.residual_heterogeneity ? <> Residual heterogeneity Q_E = <Num value={fit.residual_heterogeneity.q} digits={4} />, df {fit.residual_heterogeneity.df}, p <PValue p={fit.residual_heterogeneity.p_value} />.</> : ""}
          {fit.r2 !== null ? ` Pseudo-R² = ${(fit.r2 * 100).toFixed(1)}% of tau² explained.` : ""}
        </p>
      ) : null}
      {components ? (
        <table className="data" aria-label="Variance components">
          <caption>Variance components of the multilevel model ({fit.multilevel?.estimation ?? fit.model.method_name}), {level}% profile-likelihood intervals; test of each level against the model without it</caption>
          <thead><tr><th scope="col">Level</th><th scope="col" className="num">Groups</th><th scope="col" className="num">sigma²</th><th scope="col" className="num">{level}% CI</th><th scope="col" className="num">I²</th><th scope="col" className="num">p (level needed)</th><th scope="col">Note</th></tr></thead>
          <tbody>
            {components.map((c) => (
              <tr key={c.level}>
                <td>{c.level}</td>
                <td className="num">{c.groups}</td>
                <td className="num"><Num value={c.sigma2} digits={3} /></td>
                <td className="num">{c.ci_lower !== null && c.ci_upper !== null ? <>[<Num value={c.ci_lower} digits={3} />, <Num value={c.ci_upper} digits={3} />]</> : "—"}</td>
                <td className="num">{c.i2.toFixed(1)}%</td>
                <td className="num">{c.lrt_p_value === null ? "—" : <PValue p={c.lrt_p_value} />}</td>
                <td className="summary">{c.ci_note ?? ""}</td>
              </tr>
            ))}
          </tbody>
        </table>
      ) : null}
      {robust ? (
        <table className="data" aria-label="Cluster-robust inference">
          <caption>{robust.name}: {robust.clusters} clusters by {robust.cluster}; t tests on Satterthwaite df. {robust.description}</caption>
          <thead><tr><th scope="col">Term</th><th scope="col" className="num">Estimate</th><th scope="col" className="num">robust SE</th><th scope="col" className="num">df</th><th scope="col" className="num">t</th><th scope="col" className="num">p</th><th scope="col" className="num">{level}% CI</th></tr></thead>
          <tbody>
            {robust.coefficients.map((c) => (
              <tr key={c.term}>
                <td>{c.term}</td>
                <td className="num"><Num value={c.estimate} /></td>
                <td className="num"><Num value={c.se} digits={3} /></td>
                <td className="num"><Num value={c.df} digits={3} /></td>
                <td className="num">{c.statistic.toFixed(2)}</td>
                <td className="num"><PValue p={c.p_value} /></td>
                <td className="num">[<Num value={c.ci_lower} digits={3} />, <Num value={c.ci_upper} digits={3} />]</td>
              </tr>
            ))}
          </tbody>
        </table>
      ) : null}
      {permutation ? (
        <p aria-label="Permutation test">
          Permutation test of the moderators ({permutation.exact ? "exact" : `${permutation.permutations.toLocaleString("en-GB")} permutations, seed ${permutation.seed}`}): p <PValue p={permutation.moderators_test_p_value} /> for the test of moderators.{" "}
          <span className="muted">{permutation.description}{permutation.non_converged_fits ? ` ${permutation.non_converged_fits} permuted fits did not converge.` : ""}</span>
        </p>
      ) : null}
      <p className="muted">Fit: {fit.fit.converged ? `converged after ${fit.fit.iterations} iterations` : "did not converge"}; {fit.fit.log_likelihood_kind} log-likelihood <Num value={fit.fit.log_likelihood} digits={6} />.</p>
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
