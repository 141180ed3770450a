import type { OutcomeName } from "../ingest/schemas/vocabulary";
import type { GlmFamily } from "../stats/glm/glm-family";
import { binomialLogit } from "../stats/glm/binomial-logit";
import { poissonLog } from "../stats/glm/poisson-log";
import type { BroodForEstimates } from "./estimate-types";

/** How one brood outcome is modelled: which broods enter, the response, the family. */
export interface BroodOutcome {
  readonly name: Exclude<OutcomeName, "selection_gradient">;
  /** In words, for method text. */
  readonly description: string;
  /** Which broods enter, as a name: outcomes with the same name model the same broods. */
  readonly broods: "all" | "successful";
  /** Whether a brood enters this outcome's models. */
  readonly includes: (brood: BroodForEstimates) => boolean;
  readonly response: (brood: BroodForEstimates) => number;
  readonly family: GlmFamily;
  /** Quasi-likelihood (Pearson) standard errors for counts. */
  readonly quasi: boolean;
  /** The annual mean of the outcome, in words (between-year effect). */
  readonly annualMean: string;
}

const everyBrood = () => true;

/** The four brood outcomes of the per-site models, in reporting order. */
export const BROOD_OUTCOMES: readonly BroodOutcome[] = [
  {
    name: "fledging_failure",
    description: "fledging failure (1 = no young fledged, 0 = at least one), all broods",
    broods: "all",
    includes: everyBrood,
    response: (b) => (b.fledglings === 0 ? 1 : 0),
    family: binomialLogit,
    quasi: false,
    annualMean: "proportion of broods that failed",
  },
  {
    name: "fledglings_successful",
    description: "number of fledglings, broods with at least one fledgling",
    broods: "successful",
    includes: (b) => b.fledglings >= 1,
    response: (b) => b.fledglings,
    family: poissonLog,
    quasi: true,
    annualMean: "mean number of fledglings among successful broods",
  },
  {
    name: "recruitment",
    description: "local recruitment (1 = at least one recruit, 0 = none), all broods",
    broods: "all",
    includes: everyBrood,
    response: (b) => (b.recruits >= 1 ? 1 : 0),
    family: binomialLogit,
    quasi: false,
    annualMean: "proportion of broods with at least one recruit",
  },
  {
    name: "recruits_per_female",
    description: "number of local recruits per female (brood), all broods",
    broods: "all",
    includes: everyBrood,
    response: (b) => b.recruits,
    family: poissonLog,
    quasi: true,
    annualMean: "mean number of recruits per female",
  },
];
