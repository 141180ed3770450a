import type { StoredRun } from "./stored-run";
import { OUTCOME_LABELS, LEVEL_LABELS, SCALE_LABELS } from "../format/vocabulary-labels";
import type { OutcomeName } from "../ingest/schemas/vocabulary";

/**
 * The words of an analysis report: a methods paragraph generated from the run's specification
 * and fit, the reporting items it can fill, and the usual cautions. Pure: the page and any
 * printed report read the same text.
 */
export interface ReportItem {
  topic: string;
  status: "filled" | "to do";
  text: string;
}

export interface ReportContent {
  methods: string;
  items: ReportItem[];
  cautions: string[];
}

const ESTIMATOR_REFERENCES: Record<string, string> = {
  fe: "inverse-variance weighting",
  dl: "DerSimonian & Laird (1986)",
  reml: "restricted maximum likelihood (Viechtbauer 2005)",
  ml: "maximum likelihood (Viechtbauer 2005)",
  pm: "Paule & Mandel (1982)",
  he: "Hedges & Olkin (1985)",
  sj: "Sidik & Jonkman (2005)",
};

export function reportContent(run: StoredRun, context: { engineVersion: string; runId: number; createdAt: Date }): ReportContent {
  const { specification: spec, selection, fit } = run;
  const level = Math.round(fit.model.confidence_level * 100);
  const outcome = OUTCOME_LABELS[spec.outcome as OutcomeName] ?? spec.outcome;
  const scale = SCALE_LABELS[selection.scale as keyof typeof SCALE_LABELS] ?? selection.scale;
  const sites = new Set(selection.studies.map((s) => s.siteCode)).size;
  const species = new Set(selection.studies.map((s) => s.species)).size;
  const moderators = selection.moderators.map((m) => (m.unit ? `${m.label.toLowerCase()} (${m.unit})` : m.label.toLowerCase()));
  const method = fit.model.method;
  const components = fit.variance_components ?? null;
  const sentences = [
    `We pooled ${fit.model.k} ${LEVEL_LABELS[spec.level as keyof typeof LEVEL_LABELS] ?? spec.level} estimates of the ${spec.term} effect of mismatch on ${outcome.toLowerCase()} (${selection.link} link, ${scale}) from ${sites} site${sites === 1 ? "" : "s"} of ${species} species.`,
    method === "fe"
      ? "Estimates were combined in a common-effect (inverse-variance) model."
      : components
        ? `Estimates were combined in a multilevel ${moderators.length ? "meta-regression" : "model"} with nested random effects of ${components.map((c) => c.level).join(", ")} (one variance per level, estimated by ${fit.model.method_name}; Konstantopoulos 2011), with profile-likelihood intervals for each variance.`
        : `Estimates were combined in a ${moderators.length ? "mixed-effects meta-regression" : "random-effects model"} with the between-site variance (tau²) estimated by ${ESTIMATOR_REFERENCES[method] ?? fit.model.method_name}.`,
    fit.robust ? `Cluster-robust (CR2) standard errors with estimates clustered by ${fit.robust.cluster} (${fit.robust.clusters} clusters) and t tests on Satterthwaite degrees of freedom (Bell & McCaffrey 2002; Tipton 2015) are reported beside the model-based ones.` : "",
    fit.permutation_test ? `The moderators were also tested by permutation (${fit.permutation_test.exact ? "all orderings" : `${fit.permutation_test.permutations} random orderings, seed ${fit.permutation_test.seed}`}; Higgins & Thompson 2004).` : "",
    fit.model.test === "hksj"
      ? `Tests and ${level}% confidence intervals used the Knapp-Hartung adjustment with t on ${fit.model.test_df} degrees of freedom (Hartung & Knapp 2001; Knapp & Hartung 2003).`
      : `Tests and ${level}% confidence intervals used the normal (Wald z) reference.`,
    moderators.length ? `Moderators: ${moderators.join(", ")}; their joint contribution was tested with an omnibus ${fit.moderators_test?.distribution === "F" ? "F" : "chi-square"} test.` : "",
    method === "fe" || components ? "" : `The confidence interval for tau² (and I², H²) was obtained by the Q-profile method (Viechtbauer 2007); I² follows Higgins & Thompson (2002).`,
    fit.coefficients.length === 1 && fit.prediction_interval ? `A ${level}% prediction interval for a new site used t on k − 2 degrees of freedom (Higgins, Thompson & Spiegelhalter 2009).` : "",
    `Computed with PhenoPool engine ${context.engineVersion} (run ${context.runId}, ${context.createdAt.toISOString().slice(0, 10)}), on the accepted data submissions ${selection.submissions.map((s) => `#${s.id} (SHA-256 ${s.sha256.slice(0, 12)}…)`).join(", ")}.`,
  ];
  const items: ReportItem[] = [
    { topic: "Effect size and its computation", status: "filled", text: `${outcome}, ${spec.level.replace("_", "-")} ${spec.term} term on the ${selection.link} scale, ${scale}; each estimate's method is stored with it.` },
    { topic: "Data sources and inclusion", status: "filled", text: `Current estimates of the network's sites matching the analysis specification; ${selection.excluded.length} matching estimate(s) left out, each with its reason.` },
    { topic: "Literature search and screening", status: "to do", text: "Not applicable to pooled network data; describe how sites joined the network." },
    { topic: "Model and estimation method", status: "filled", text: `${fit.model.method_name}; ${fit.model.test_name}.` },
    { topic: "Heterogeneity", status: "filled", text: components ? "A variance per level with its profile-likelihood interval, per-level and total I², and a likelihood-ratio test of each level." : `tau², I² and Q test with df and p, and the Q-profile interval for tau².` },
    { topic: "Moderators and their tests", status: moderators.length ? "filled" : "to do", text: moderators.length ? moderators.join(", ") : "No moderators in this analysis." },
    {
      topic: "Non-independence (several estimates per site or species)",
      status: spec.grain === "site" || components || fit.robust ? "filled" : "to do",
      text: components
        ? `Multilevel model with levels ${components.map((c) => c.level).join(", ")}${fit.robust ? `; cluster-robust errors by ${fit.robust.cluster}` : ""}.`
        : fit.robust
          ? `Cluster-robust errors by ${fit.robust.cluster}.`
          : spec.grain === "site"
            ? "One estimate per site."
            : "Several estimates per site: consider a multilevel model or cluster-robust errors.",
    },
    { topic: "Sensitivity analyses and small-study tests", status: "to do", text: "Leave-one-out, influence and funnel-asymmetry tests are reported separately." },
    { topic: "Software, version and data versions", status: "filled", text: `PhenoPool ${context.engineVersion}; submissions ${selection.submissions.map((s) => `#${s.id}`).join(", ")}.` },
    { topic: "Data and code availability", status: "to do", text: "The network's data package export and this run's CSV downloads can be archived with the paper." },
  ];
  const cautions = [
    moderators.length
      ? "A moderator slope across sites is an association between sites, not an effect within a site: sites differ in many ways at once (aggregation or ecological bias)."
      : "",
    fit.model.k < 10 ? `With only ${fit.model.k} estimates, tau² is estimated imprecisely and Knapp-Hartung intervals can be wide or unstable.` : "With few sites, tau² and Knapp-Hartung intervals are unstable.",
    "Small-study and funnel-asymmetry tests have little power below about ten estimates.",
  ].filter(Boolean);
  return { methods: sentences.filter(Boolean).join(" "), items, cautions };
}
