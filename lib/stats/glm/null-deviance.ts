import { interceptColumnOf } from "../linear/column-centring";
import type { DesignMatrix } from "../linear/design-matrix";
import type { GlmFamily } from "./glm-family";

/** Whether some column of the design is all ones (a declared factor-plus-covariates design has its intercept first). */
export function hasInterceptColumn(design: DesignMatrix): boolean {
  return interceptColumnOf(design) >= 0;
}

/** Deviance of the intercept-only model (or of eta = 0 when the design has no intercept). */
export function nullDevianceOf(design: DesignMatrix, response: ArrayLike<number>, family: GlmFamily): number {
  const rows = design.rows;
  let eta = 0;
  if (hasInterceptColumn(design)) {
    let sum = 0;
    for (let i = 0; i < rows; i += 1) sum += response[i]!;
    eta = family.linkOf(sum / rows);
  }
  // The family's own inverse link, with its bounds on the mean.
  const mean = new Float64Array(1);
  family.meanOf(Float64Array.of(eta), mean);
  return family.constantMeanDeviance(response, mean[0]!, eta);
}
