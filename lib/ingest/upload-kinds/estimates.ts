import { estimateRowSchema, type EstimateRow } from "../schemas/estimate-row";
import { checkRow } from "../check-row";
import type { RecordReader } from "../record-reader";

/** 97.5% quantile of the standard normal distribution: a 95% interval spans 2 x 1.959964 standard errors. */
export const NORMAL_QUANTILE_975 = 1.959963984540054;

/**
 * One uploaded estimate. The precision may be given as a standard error, a sampling variance
 * (SE = square root) or a 95% confidence interval on the link scale (SE = (upper - lower) /
 * (2 x 1.959964)); exactly one of them per row, and the method text says which conversion was made.
 */
export function readEstimate(reader: RecordReader): EstimateRow | null {
  reader.checkSiteCode();
  const standardError = reader.number("standardError", false);
  const variance = reader.number("variance", false);
  const lower = reader.number("ciLower", false);
  const upper = reader.number("ciUpper", false);
  const value = reader.number("estimate", true);
  const method = reader.text("method", true);
  const given = [
    reader.has("standardError") && !reader.isEmpty("standardError") ? reader.heading("standardError") : null,
    reader.has("variance") && !reader.isEmpty("variance") ? reader.heading("variance") : null,
    (reader.has("ciLower") && !reader.isEmpty("ciLower")) || (reader.has("ciUpper") && !reader.isEmpty("ciUpper")) ? "the 95% interval" : null,
  ].filter((g): g is string => g !== null);
  let se: number | undefined;
  let seMethod = "";
  const precisionField = reader.has("standardError") ? "standardError" : reader.has("variance") ? "variance" : "ciLower";
  if (given.length !== 1) {
    reader.fail(
      precisionField,
      given.length === 0
        ? "the row gives no precision: give exactly one of standard error, variance or 95% interval"
        : `the row gives ${given.join(" and ")}: give exactly one of standard error, variance or 95% interval`,
    );
  } else if (standardError !== undefined && standardError !== null) {
    se = standardError;
    reader.trace("standardError", "standardError");
  } else if (variance !== undefined && variance !== null) {
    reader.trace("standardError", "variance");
    if (variance <= 0) reader.fail("variance", "variance must be > 0");
    else {
      se = Math.sqrt(variance);
      seMethod = "; standard error = square root of the uploaded sampling variance";
    }
  } else if (lower !== undefined && upper !== undefined) {
    if (lower === null || upper === null) {
      reader.fail(lower === null ? "ciLower" : "ciUpper", "a 95% interval needs both its lower and its upper end");
    } else if (!(upper > lower)) {
      reader.fail("ciUpper", `the interval's upper end ${upper} is not above its lower end ${lower}`);
    } else {
      se = (upper - lower) / (2 * NORMAL_QUANTILE_975);
      seMethod = "; standard error from the uploaded 95% confidence interval as (upper - lower) / (2 x 1.959964), on the link scale";
      reader.trace("standardError", "ciLower");
      if (value !== undefined && value !== null && (value < lower || value > upper)) {
        reader.fail("estimate", `the estimate ${value} lies outside its 95% interval [${lower}, ${upper}]: give the interval on the link scale`);
      }
    }
  }
  const candidate = {
    outcome: reader.code("outcome", true) ?? undefined,
    level: reader.code("level", true) ?? undefined,
    term: reader.code("term", true) ?? undefined,
    year: reader.wholeNumber("year", false),
    value: value ?? undefined,
    standardError: se,
    n: reader.wholeNumber("n", true) ?? undefined,
    scale: reader.code("scale", true) ?? undefined,
    link: reader.code("link", true) ?? undefined,
    method: method === null || method === undefined ? undefined : `${method}${seMethod}`,
  };
  for (const field of ["outcome", "level", "term", "year", "n", "scale", "link", "method"] as const) reader.trace(field, field);
  reader.trace("value", "estimate");
  return checkRow(estimateRowSchema, candidate, reader);
}
