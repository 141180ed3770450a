/**
 * Coding of moderators: treatment contrasts as in R's model.matrix with contr.treatment
 * (Chambers & Hastie 1992; the R fixture regime "categorical" checks the same coding end to end),
 * centring, and the coding of a prediction row.
 */
import { describe, expect, it } from "vitest";
import { encodeModeratorRow, moderatorDesign } from "@/lib/stats/meta/moderator-design";
import { conditionDesign, coefficientsToOriginalScale, covarianceToOriginalScale, rowToConditionedScale } from "@/lib/stats/meta/design-conditioning";
import { expectAllClose, expectClose } from "@/test/helpers/expect-close";

describe("moderatorDesign", () => {
  it("codes a categorical moderator as 0/1 columns for every level but the reference (R contr.treatment)", () => {
    const result = moderatorDesign(4, [{ kind: "categorical", name: "habitat", values: ["pine", "oak", "mixed", "oak"], reference: "oak" }]);
    expect(result.design.columnNames).toEqual(["intercept", "habitat[mixed]", "habitat[pine]"]);
    expect(Array.from(result.design.data)).toEqual([1, 0, 1, 1, 0, 0, 1, 1, 0, 1, 0, 0]);
    expect(result.levels.habitat).toEqual(["oak", "mixed", "pine"]);
  });

  it("defaults the reference to the first level in sorted order, like R's factor()", () => {
    const result = moderatorDesign(3, [{ kind: "categorical", name: "habitat", values: ["pine", "oak", "mixed"] }]);
    expect(result.design.columnNames).toEqual(["intercept", "habitat[oak]", "habitat[pine]"]);
  });

  it("enters a numeric moderator as given or centred at its mean", () => {
    const given = moderatorDesign(3, [{ kind: "numeric", name: "lay_date", values: [100, 110, 120] }]);
    expect(Array.from(given.design.data)).toEqual([1, 100, 1, 110, 1, 120]);
    const centred = moderatorDesign(3, [{ kind: "numeric", name: "lay_date", values: [100, 110, 120], centre: true }]);
    expect(Array.from(centred.design.data)).toEqual([1, -10, 1, 0, 1, 10]);
    expect(centred.terms[1]).toEqual({ column: "lay_date", kind: "numeric", moderator: "lay_date", centredAt: 110 });
  });

  it("encodes prediction rows in the fitted coding, and refuses unknown or missing values", () => {
    const design = moderatorDesign(4, [
      { kind: "numeric", name: "lay_date", values: [100, 110, 120, 130], centre: true },
      { kind: "categorical", name: "habitat", values: ["oak", "pine", "oak", "mixed"], reference: "oak" },
    ]);
    expect(Array.from(encodeModeratorRow(design, { lay_date: 125, habitat: "pine" }))).toEqual([1, 10, 0, 1]);
    expect(() => encodeModeratorRow(design, { lay_date: 125 })).toThrow(/needs a value for moderator 'habitat'/);
    expect(() => encodeModeratorRow(design, { lay_date: 125, habitat: "beech" })).toThrow(/'beech' is not a level of moderator 'habitat'/);
    expect(() => encodeModeratorRow(design, { lay_date: "late", habitat: "oak" })).toThrow(/needs a finite number/);
    expect(() => encodeModeratorRow(design, { lay_date: 1, habitat: "oak", clutch: 3 })).toThrow(/'clutch' is not a moderator/);
  });
});

describe("internal centring and scaling (design-conditioning.ts) is exact and reversible", () => {
  it("centres 2001..2003 at 2002 with root mean square deviation sqrt(2/3), by hand", () => {
    const { design } = moderatorDesign(3, [{ kind: "numeric", name: "year", values: [2001, 2002, 2003] }]);
    const conditioned = conditionDesign(design);
    expectAllClose(conditioned.centres, [0, 2002], { rtol: 1e-15 });
    expectAllClose(conditioned.scales, [1, Math.sqrt(2 / 3)], { rtol: 1e-15 });
    expectAllClose(rowToConditionedScale(conditioned, [1, 2003]), [1, 1 / Math.sqrt(2 / 3)], { rtol: 1e-14 });
  });

  it("maps coefficients back: z = (x - m) / s, so beta_1 = gamma_1 / s and beta_0 = gamma_0 - m gamma_1 / s", () => {
    const { design } = moderatorDesign(3, [{ kind: "numeric", name: "year", values: [2001, 2002, 2003] }]);
    const conditioned = conditionDesign(design);
    const s = Math.sqrt(2 / 3);
    expectAllClose(coefficientsToOriginalScale(conditioned, [0.5, 0.2]), [0.5 - (2002 * 0.2) / s, 0.2 / s], { rtol: 1e-14 });
    // Var(beta_1) = Var(gamma_1) / s^2 for a diagonal Cov(gamma).
    const covariance = covarianceToOriginalScale(conditioned, [0.01, 0, 0, 0.04]);
    expectClose(covariance[3]!, 0.04 / s ** 2, { rtol: 1e-14, label: "Var(beta_1)" });
    expectClose(covariance[0]!, 0.01 + (2002 / s) ** 2 * 0.04, { rtol: 1e-14, label: "Var(beta_0)" });
  });
});
