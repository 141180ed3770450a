import type { DesignMatrix } from "../linear/design-matrix";
import type { GlmFamily } from "./glm-family";

/** Whether some column of the design is all ones. */
export function hasInterceptColumn(design: DesignMatrix): boolean {
  for (let j = 0; j < design.columns; j += 1) {
    let allOnes = true;
    for (let i = 0; i < design.rows && allOnes; i += 1) allOnes = design.data[i * design.columns + j] === 1;
    if (allOnes) return true;
  }
  return false;
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
  const linearPredictor = new Float64Array(rows).fill(eta);
  const mean = new Float64Array(rows);
  family.meanOf(linearPredictor.subarray(0, 1), mean.subarray(0, 1));
  mean.fill(mean[0]!);
  return family.deviance(response, mean, linearPredictor);
}
