/**
 * Outlier and influence diagnostics (Viechtbauer & Cheung 2010), checked two ways:
 * 1. against base R (test/fixtures/r-stats/make-sensitivity-fixtures.R, R 4.2.2): the measures
 *    written out from their formulas on the BCG trials, refitting with lm() and an optimize() +
 *    uniroot() REML in R;
 * 2. by brute force here: every study deleted, the model refitted by fitMetaModel on the remaining
 *    studies, and each formula evaluated in the user's coordinates with ml-matrix (an independent
 *    linear-algebra library), not with the module's internal coordinate mapping.
 * The flagging rules are rules of thumb (common practice); their thresholds are checked against
 * their formulas and R's qchisq.
 */
import { describe, expect, it } from "vitest";
import { determinant, inverse, Matrix } from "ml-matrix";
import { fitMetaModel } from "@/lib/stats/meta/fit-meta-model";
import { metaData, type MetaData } from "@/lib/stats/meta/meta-data";
import { moderatorDesign } from "@/lib/stats/meta/moderator-design";
import type { DesignMatrix } from "@/lib/stats/linear/design-matrix";
import { influenceDiagnostics, influenceRules, type InfluenceResult } from "@/lib/stats/meta/sensitivity/influence-diagnostics";
import { influenceToJson } from "@/lib/stats/meta/sensitivity/sensitivity-json";
import { subsetDesign, subsetMetaData } from "@/lib/stats/meta/sensitivity/subset-fit";
import type { Tau2Method } from "@/lib/stats/meta/tau2-estimator";
import { expectAllClose, expectClose } from "@/test/helpers/expect-close";
import { bcg, latitudeDesign, reference } from "./sensitivity-fixture";

function checkAgainstR(result: InfluenceResult, name: keyof typeof reference.influence, rtol: number) {
  const expected = reference.influence[name];
  const atol = rtol * 1e-2;
  expectClose(result.full.heterogeneity.tau2, expected.tau2, { rtol, label: `${name} tau2 (R)` });
  expectAllClose(result.full.coefficients.map((c) => c.estimate), expected.beta, { rtol, label: `${name} coefficients (R)` });
  result.studies.forEach((study, i) => {
    const r = expected.studies[i]!;
    const label = `${name} study ${i + 1}`;
    expect(study.deleted.available, label).toBe(true);
    if (!study.deleted.available) return;
    const d = study.deleted;
    expectClose(study.leverage, r.hat, { rtol, atol, label: `${label} hat (R)` });
    expectClose(study.weightPercent, r.weight_percent, { rtol, atol, label: `${label} weight (R)` });
    expectClose(d.studentizedDeletedResidual, r.rstudent, { rtol, atol, label: `${label} rstudent (R)` });
    expectClose(d.dffits, r.dffits, { rtol, atol, label: `${label} DFFITS (R)` });
    expectClose(d.cooksDistance, r.cooks_distance, { rtol, atol, label: `${label} Cook's distance (R)` });
    expectClose(d.covarianceRatio, r.covariance_ratio, { rtol, atol, label: `${label} COVRATIO (R)` });
    expectClose(d.tau2Deleted, r.tau2_deleted, { rtol, atol, label: `${label} tau2 without the study (R)` });
    expectClose(d.tau2Change, r.tau2_deleted - expected.tau2, { rtol: 1e3 * rtol, atol: 10 * atol, label: `${label} change in tau2 (R)` });
    expectClose(d.qDeleted, r.q_deleted, { rtol: 1e-10, label: `${label} Q without the study (R)` });
    expectAllClose(d.dfbetas, r.dfbetas, { rtol, atol, label: `${label} DFBETAS (R)` });
  });
}

describe("influence diagnostics against base R (make-sensitivity-fixtures.R)", () => {
  it("BCG, DerSimonian-Laird (closed form): every measure to 1e-9", () => {
    checkAgainstR(influenceDiagnostics(bcg, { method: "dl" }), "bcg_dl", 1e-9);
  });

  it("BCG, REML (R: optimize + uniroot on the score): every measure to 1e-7", () => {
    checkAgainstR(influenceDiagnostics(bcg, { method: "reml" }), "bcg_reml", 1e-7);
  });

  it("BCG meta-regression on absolute latitude, REML: every measure, both DFBETAS, to 1e-7", () => {
    checkAgainstR(influenceDiagnostics(bcg, { method: "reml", design: latitudeDesign }), "bcg_reml_ablat", 1e-7);
  });

  it("Baujat coordinates (common effect): R's values, and the contributions sum to Cochran's Q", () => {
    for (const [name, design] of [["bcg", undefined], ["bcg_ablat", latitudeDesign]] as const) {
      const result = influenceDiagnostics(bcg, { method: "reml", design });
      const expected = reference.baujat[name];
      expectAllClose(result.baujat.points.map((p) => p.contributionToQ), expected.points.map((p) => p.contribution_to_q), { rtol: 1e-10, label: `${name} contribution to Q (R)` });
      expectAllClose(result.baujat.points.map((p) => p.influenceOnEstimate!), expected.points.map((p) => p.influence_on_estimate), { rtol: 1e-9, label: `${name} influence (R)` });
      const total = result.baujat.points.reduce((sum, p) => sum + p.contributionToQ, 0);
      expectClose(total, expected.q, { rtol: 1e-12, label: `${name} sum of contributions = Q (R)` });
      expectClose(total, result.baujat.commonEffect.heterogeneity.q, { rtol: 1e-12, label: `${name} sum = the engine's Q` });
    }
    // Cochran's Q of the BCG trials, published: 152.23 (quoted from memory in issue 3).
    expectClose(reference.baujat.bcg.q, 152.23, { atol: 5e-3, label: "Q (published)" });
  });
});

/** The diagnostics recomputed from refits with fitMetaModel, in the user's coordinates. */
function bruteForce(data: MetaData, design: DesignMatrix, method: Tau2Method) {
  const full = fitMetaModel(data, { method, design });
  const p = design.columns;
  const covariance = new Matrix(p, p);
  full.coefficientCovariance.forEach((value, index) => covariance.set(Math.floor(index / p), index % p, value));
  const beta = full.coefficients.map((c) => c.estimate);
  return Array.from({ length: data.k }, (_, i) => {
    const rows = Array.from({ length: data.k }, (_, j) => j).filter((j) => j !== i);
    const refit = fitMetaModel(subsetMetaData(data, rows), { method, design: subsetDesign(design, rows) });
    const deletedCovariance = new Matrix(p, p);
    refit.coefficientCovariance.forEach((value, index) => deletedCovariance.set(Math.floor(index / p), index % p, value));
    const deletedBeta = refit.coefficients.map((c) => c.estimate);
    const x = Matrix.rowVector(Array.from(design.data.subarray(i * p, i * p + p)));
    const dot = (b: number[]) => b.reduce((sum, value, j) => sum + value * x.get(0, j), 0);
    const varianceDeleted = x.mmul(deletedCovariance).mmul(x.transpose()).get(0, 0);
    const tau2 = refit.heterogeneity.tau2;
    const v = data.variances[i]!;
    const shift = Matrix.columnVector(beta.map((b, j) => b - deletedBeta[j]!));
    const hat = full.studies.leverage[i]!;
    return {
      rstudent: (data.estimates[i]! - dot(deletedBeta)) / Math.sqrt(v + tau2 + varianceDeleted),
      dffits: (dot(beta) - dot(deletedBeta)) / Math.sqrt(hat * (tau2 + v)),
      cook: shift.transpose().mmul(inverse(covariance)).mmul(shift).get(0, 0),
      covratio: determinant(deletedCovariance) / determinant(covariance),
      dfbetas: beta.map((b, j) => (b - deletedBeta[j]!) / Math.sqrt(deletedCovariance.get(j, j))),
      tau2,
      q: refit.heterogeneity.q,
    };
  });
}

describe("influence diagnostics by brute force (refit without each study with fitMetaModel)", () => {
  const habitat = ["oak", "pine", "oak", "mixed", "pine", "oak", "mixed", "pine", "oak", "mixed", "pine", "oak", "mixed"];
  const cases: [string, DesignMatrix, Tau2Method][] = [
    ["BCG, REML, intercept only", moderatorDesign(13, []).design, "reml"],
    ["BCG, Paule-Mandel, latitude", latitudeDesign, "pm"],
    ["BCG, ML, latitude + three-level habitat", moderatorDesign(13, [{ kind: "numeric", name: "ablat", values: reference.data.bcg.ablat }, { kind: "categorical", name: "habitat", values: habitat }]).design, "ml"],
    ["BCG, common effect, latitude centred", moderatorDesign(13, [{ kind: "numeric", name: "ablat", values: reference.data.bcg.ablat, centre: true }]).design, "fe"],
  ];
  for (const [name, design, method] of cases) {
    it(name, () => {
      const result = influenceDiagnostics(bcg, { method, design });
      const expected = bruteForce(bcg, design, method);
      result.studies.forEach((study, i) => {
        const e = expected[i]!;
        const label = `${name}, study ${i + 1}`;
        if (!study.deleted.available) throw new Error(`${label}: ${study.deleted.reason}`);
        const d = study.deleted;
        const tolerance = { rtol: 1e-8, atol: 1e-11 };
        expectClose(d.studentizedDeletedResidual, e.rstudent, { ...tolerance, label: `${label} rstudent` });
        expectClose(d.dffits, e.dffits, { ...tolerance, label: `${label} DFFITS` });
        expectClose(d.cooksDistance, e.cook, { ...tolerance, label: `${label} Cook` });
        expectClose(d.covarianceRatio, e.covratio, { ...tolerance, label: `${label} COVRATIO` });
        expectAllClose(d.dfbetas, e.dfbetas, { ...tolerance, label: `${label} DFBETAS` });
        expect(d.tau2Deleted, `${label} tau2`).toBe(e.tau2);
        expect(d.qDeleted, `${label} Q`).toBe(e.q);
      });
    });
  }

  it("a moderator 2e8 from zero (area in square metres) gives the diagnostics of the same moderator shifted to zero", () => {
    const area = reference.data.bcg.ablat.map((a) => 2e8 + a);
    const far = influenceDiagnostics(bcg, { method: "reml", design: moderatorDesign(13, [{ kind: "numeric", name: "area", values: area }]).design });
    const near = influenceDiagnostics(bcg, { method: "reml", design: latitudeDesign });
    far.studies.forEach((study, i) => {
      const a = study.deleted;
      const b = near.studies[i]!.deleted;
      if (!a.available || !b.available) throw new Error("refit unavailable");
      // A shift of the moderator changes nothing but the intercept's meaning (DFBETAS of the intercept).
      expectClose(a.studentizedDeletedResidual, b.studentizedDeletedResidual, { rtol: 1e-6, label: `study ${i + 1} rstudent` });
      expectClose(a.cooksDistance, b.cooksDistance, { rtol: 1e-6, atol: 1e-9, label: `study ${i + 1} Cook` });
      expectClose(a.covarianceRatio, b.covarianceRatio, { rtol: 1e-6, label: `study ${i + 1} COVRATIO` });
      expectClose(a.dfbetas[1]!, b.dfbetas[1]!, { rtol: 1e-6, atol: 1e-9, label: `study ${i + 1} slope DFBETAS` });
    });
  });
});

describe("flags by stated rules of thumb (common practice)", () => {
  it("thresholds follow their formulas (chi-square median from R: qchisq(0.5, 1) = 0.4549364, qchisq(0.5, 2) = 1.386294)", () => {
    const [rstudent, dffits, cook, hat, dfbetas] = influenceRules(13, 1);
    expectClose(rstudent!.threshold, 1.959964, { atol: 1e-6, label: "z 0.975" });
    expectClose(dffits!.threshold, 3 * Math.sqrt(1 / 12), { rtol: 1e-15, label: "DFFITS" });
    expectClose(cook!.threshold, 0.4549364, { atol: 1e-7, label: "qchisq(0.5, 1) (R)" });
    expectClose(influenceRules(20, 2)[2]!.threshold, 1.386294, { atol: 1e-6, label: "qchisq(0.5, 2) (R)" });
    expectClose(hat!.threshold, 3 / 13, { rtol: 1e-15, label: "hat" });
    expect(dfbetas!.threshold).toBe(1);
    for (const rule of influenceRules(13, 1)) {
      expect(rule.status).toBe("common practice");
      expect(rule.source).toMatch(/Viechtbauer & Cheung \(2010\)/);
    }
  });

  it("an estimate far from the rest is flagged as an outlier and influential; the BCG trials alone are not flagged", () => {
    const plain = influenceDiagnostics(bcg);
    expect(plain.studies.filter((s) => s.outlier || s.influential).map((s) => s.label)).toEqual([]);
    const data = metaData({ estimates: [...bcg.estimates, 3], variances: [...bcg.variances, 0.01] });
    const result = influenceDiagnostics(data, { labels: [...Array.from({ length: 13 }, (_, i) => `trial ${i + 1}`), "wild"] });
    const wild = result.studies[13]!;
    expect(wild.label).toBe("wild");
    expect(wild.outlier).toBe(true);
    expect(wild.influential).toBe(true);
    expect(wild.flaggedBy).toEqual(expect.arrayContaining(["studentized_deleted_residual", "dffits", "cooks_distance", "dfbetas"]));
    // Every flag agrees with its rule applied to the reported value.
    const rules = Object.fromEntries(result.rules.map((r) => [r.measure, r.threshold]));
    for (const s of result.studies) {
      if (!s.deleted.available) continue;
      expect(s.flaggedBy.includes("dffits"), s.label).toBe(Math.abs(s.deleted.dffits) > rules.dffits!);
      expect(s.flaggedBy.includes("cooks_distance"), s.label).toBe(s.deleted.cooksDistance > rules.cooks_distance!);
      expect(s.flaggedBy.includes("hat"), s.label).toBe(s.leverage > rules.hat!);
      expect(s.outlier, s.label).toBe(Math.abs(s.deleted.studentizedDeletedResidual) > rules.studentized_deleted_residual!);
    }
  });
});

describe("hostile input", () => {
  it("refuses too few studies for the refits, and bad labels", () => {
    const three = metaData({ estimates: [0.1, 0.4, 0.2], variances: [0.01, 0.02, 0.03] });
    expect(() => influenceDiagnostics(three, { design: moderatorDesign(3, [{ kind: "numeric", name: "x", values: [1, 2, 4] }]).design })).toThrow(/at least 4 studies for 2 coefficient\(s\), got 3/);
    expect(() => influenceDiagnostics(metaData({ estimates: [0.1], variances: [0.01] }))).toThrow(/one study pools nothing/);
    expect(() => influenceDiagnostics(three, { labels: ["a", "b"] })).toThrow(/3 studies but 2 labels/);
    expect(() => influenceDiagnostics(three, { labels: ["a", " ", "c"] })).toThrow(/study 2: the label is empty/);
    expect(() => influenceDiagnostics(metaData({ estimates: [0.1, 0.4, 0.2, 0.3], variances: [0.01, 0.02, 0.03, 0.01], caseWeights: [1, 2, 1, 1] }))).toThrow(/without case weights/);
    // Three studies, intercept only: two remain in each refit, which is enough.
    expect(influenceDiagnostics(three).studies.every((s) => s.deleted.available)).toBe(true);
  });

  it("a study alone at its moderator level: no refit without it (the reason is given), flagged by its hat value of 1, no NaN in JSON", () => {
    const habitat = ["oak", "oak", "pine", "oak", "pine", "oak", "pine", "oak", "pine", "oak", "pine", "oak", "heath"];
    const design = moderatorDesign(13, [{ kind: "categorical", name: "habitat", values: habitat }]).design;
    const result = influenceDiagnostics(bcg, { design });
    const alone = result.studies[12]!;
    expect(alone.deleted.available).toBe(false);
    if (!alone.deleted.available) expect(alone.deleted.reason).toMatch(/without this study cannot be fitted: the moderators are collinear/);
    expectClose(alone.leverage, 1, { rtol: 1e-12, label: "hat value of the lone study" });
    expect(alone.flaggedBy).toEqual(["hat"]);
    expect(result.warnings.map((w) => w.code)).toContain("refit_unavailable");
    expect(result.baujat.points[12]!.influenceOnEstimate).toBeNull();
    const json = influenceToJson(result) as { studies: { cooks_distance: number | null; note: string | null }[] };
    expect(json.studies[12]!.cooks_distance).toBeNull();
    expect(json.studies[12]!.note).toMatch(/cannot be fitted/);
    expect(JSON.stringify(json)).not.toMatch(/NaN|Infinity/);
  });
});
