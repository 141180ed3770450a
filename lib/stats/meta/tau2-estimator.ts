/**
 * The between-study variance estimators by name, with the words and references every output
 * (table, JSON, report) uses to describe them.
 *
 * References: see each estimator's file (dersimonian-laird.ts, maximum-likelihood.ts,
 * paule-mandel.ts, hedges.ts, sidik-jonkman.ts).
 */
import type { WeightedFit } from "./weighted-fit";
import { dersimonianLairdTau2 } from "./dersimonian-laird";
import { hedgesTau2 } from "./hedges";
import { likelihoodTau2 } from "./maximum-likelihood";
import { pauleMandelTau2 } from "./paule-mandel";
import { sidikJonkmanTau2 } from "./sidik-jonkman";
import { closedFormEstimate, type IterationControl, type Tau2Estimate } from "./tau2-estimate";

/** fe: common effect (tau^2 = 0); the others estimate tau^2. */
export const TAU2_METHODS = ["fe", "dl", "reml", "ml", "pm", "he", "sj"] as const;
export type Tau2Method = (typeof TAU2_METHODS)[number];

export interface MethodDescription {
  readonly method: Tau2Method;
  /** Short name, e.g. "restricted maximum likelihood". */
  readonly name: string;
  /** One sentence on what is estimated and how. */
  readonly description: string;
  readonly references: readonly string[];
}

export const METHOD_DESCRIPTIONS: Readonly<Record<Tau2Method, MethodDescription>> = {
  fe: {
    method: "fe",
    name: "common effect (inverse variance)",
    description: "Assumes one true effect (tau^2 = 0); studies weighted by 1 / v_i.",
    references: ["Hedges, L. V. & Olkin, I. (1985). Statistical Methods for Meta-Analysis. Academic Press."],
  },
  dl: {
    method: "dl",
    name: "DerSimonian-Laird",
    description: "Method-of-moments tau^2 from Q at inverse-variance weights (Raudenbush's generalisation with moderators), truncated at 0.",
    references: [
      "DerSimonian, R. & Laird, N. (1986). Controlled Clinical Trials 7: 177-188.",
      "Raudenbush, S. W. (2009). In The Handbook of Research Synthesis and Meta-Analysis, 2nd ed., ch. 16.",
    ],
  },
  reml: {
    method: "reml",
    name: "restricted maximum likelihood",
    description: "tau^2 maximising the restricted likelihood; Fisher scoring with step-halving, tau^2 >= 0.",
    references: [
      "Harville, D. A. (1977). Journal of the American Statistical Association 72: 320-338.",
      "Viechtbauer, W. (2005). Journal of Educational and Behavioral Statistics 30: 261-293.",
    ],
  },
  ml: {
    method: "ml",
    name: "maximum likelihood",
    description: "tau^2 maximising the likelihood; Fisher scoring with step-halving, tau^2 >= 0.",
    references: [
      "Harville, D. A. (1977). Journal of the American Statistical Association 72: 320-338.",
      "Viechtbauer, W. (2005). Journal of Educational and Behavioral Statistics 30: 261-293.",
    ],
  },
  pm: {
    method: "pm",
    name: "Paule-Mandel",
    description: "tau^2 at which the generalised Q statistic equals its expectation k - p (0 when Q(0) <= k - p).",
    references: ["Paule, R. C. & Mandel, J. (1982). Journal of Research of the National Bureau of Standards 87: 377-385."],
  },
  he: {
    method: "he",
    name: "Hedges",
    description: "Method-of-moments tau^2 from the unweighted least-squares residuals, truncated at 0.",
    references: ["Hedges, L. V. & Olkin, I. (1985). Statistical Methods for Meta-Analysis. Academic Press."],
  },
  sj: {
    method: "sj",
    name: "Sidik-Jonkman",
    description: "One weighted step from the crude estimate sum e^2 / k of the least-squares residuals.",
    references: [
      "Sidik, K. & Jonkman, J. N. (2005). Journal of the Royal Statistical Society C 54: 367-384.",
      "Sidik, K. & Jonkman, J. N. (2005). Journal of Biopharmaceutical Statistics 15: 823-838.",
    ],
  },
};

/**
 * Estimates tau^2 with `method` on the problem of `fit`.
 * Input: a full-rank problem with k > p. Returns tau^2 >= 0 with convergence information
 * (ML/REML and PM iterate, starting from the DerSimonian-Laird estimate). The workspace is left
 * at some evaluation: re-evaluate at the returned tau^2 before reading it.
 * Example: estimateTau2("pm", fit, control).tau2 is 0.3181 for the BCG trials.
 */
export function estimateTau2(method: Tau2Method, fit: WeightedFit, control: IterationControl): Tau2Estimate {
  switch (method) {
    case "fe":
      return closedFormEstimate(0);
    case "dl":
      return dersimonianLairdTau2(fit);
    case "he":
      return hedgesTau2(fit);
    case "sj":
      return sidikJonkmanTau2(fit);
    case "pm":
      return pauleMandelTau2(fit, dersimonianLairdTau2(fit).tau2, control);
    case "ml":
    case "reml": {
      const estimate = likelihoodTau2(fit, method, dersimonianLairdTau2(fit).tau2, control);
      return { tau2: estimate.tau2, converged: estimate.converged, iterations: estimate.iterations, standardError: estimate.standardError };
    }
  }
}
