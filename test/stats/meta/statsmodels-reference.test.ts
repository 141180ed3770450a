/**
 * Agreement with Python's statsmodels 0.13.5 (Debian), combine_effects, on the intercept-only
 * model of every generated regime (test/fixtures/statsmodels/make-meta-fixtures.py): the common
 * effect with its SE, Cochran's Q, DerSimonian-Laird and Paule-Mandel tau2 with the pooled mean, its
 * SE and the Knapp-Hartung SE. Required agreement 1e-6 relative; stated per quantity.
 * statsmodels does not truncate the DL tau2 at 0 (we do), and its Paule-Mandel iteration gives up
 * on some regimes (pm_comparable false); those comparisons are skipped with the reason in the fixture.
 */
import { describe, expect, it } from "vitest";
import referenceJson from "@/test/fixtures/statsmodels/meta-reference.json";
import { fitMetaModel } from "@/lib/stats/meta/fit-meta-model";
import { expectClose } from "@/test/helpers/expect-close";
import { REFERENCE_DATASET_NAMES, referenceDataset } from "./reference-datasets";

interface StatsmodelsReference {
  k: number;
  fe_mean: number;
  fe_se: number;
  fe_se_hksj: number;
  q: number;
  dl_tau2_raw: number;
  dl_comparable: boolean;
  dl_mean: number;
  dl_se: number;
  dl_se_hksj: number;
  pm_tau2: number;
  pm_comparable: boolean;
  pm_mean: number;
  pm_se: number;
  pm_se_hksj: number;
}

const reference = (referenceJson as unknown as { reference: Record<string, StatsmodelsReference> }).reference;

describe("intercept-only pooling against statsmodels combine_effects", () => {
  for (const name of REFERENCE_DATASET_NAMES) {
    const { data, description } = referenceDataset(name);
    const ref = reference[name]!;
    describe(`${name} (${description})`, () => {
      it("common effect, its SE and Knapp-Hartung SE, and Cochran's Q", () => {
        expect(data.effectiveK).toBe(ref.k);
        const fe = fitMetaModel(data, { method: "fe" });
        expectClose(fe.coefficients[0]!.estimate, ref.fe_mean, { rtol: 1e-10, label: "common effect (statsmodels)" });
        expectClose(fe.coefficients[0]!.standardError, ref.fe_se, { rtol: 1e-10, label: "common-effect SE (statsmodels)" });
        expectClose(fe.heterogeneity.q, ref.q, { rtol: 1e-9, label: "Q (statsmodels)" });
        expectClose(fitMetaModel(data, { method: "fe", test: "hksj" }).coefficients[0]!.standardError, ref.fe_se_hksj, { rtol: 1e-9, label: "common-effect HKSJ SE (statsmodels)" });
      });

      it("DerSimonian-Laird tau2 (truncated at 0), pooled mean, SE and HKSJ SE", () => {
        const dl = fitMetaModel(data, { method: "dl" });
        expectClose(dl.heterogeneity.tau2, Math.max(0, ref.dl_tau2_raw), { rtol: 1e-9, label: "DL tau2 (statsmodels, truncated)" });
        const mean = ref.dl_comparable ? ref.dl_mean : ref.fe_mean;
        const se = ref.dl_comparable ? ref.dl_se : ref.fe_se;
        expectClose(dl.coefficients[0]!.estimate, mean, { rtol: 1e-10, label: "DL pooled mean (statsmodels)" });
        expectClose(dl.coefficients[0]!.standardError, se, { rtol: 1e-10, label: "DL SE (statsmodels)" });
        if (ref.dl_comparable) {
          expectClose(fitMetaModel(data, { method: "dl", test: "hksj" }).coefficients[0]!.standardError, ref.dl_se_hksj, { rtol: 1e-9, label: "DL HKSJ SE (statsmodels)" });
        }
      });

      it.skipIf(!ref.pm_comparable)("Paule-Mandel tau2, pooled mean, SE and HKSJ SE", () => {
        const pm = fitMetaModel(data, { method: "pm" });
        if (ref.pm_tau2 === 0) expect(pm.heterogeneity.tau2).toBe(0);
        // statsmodels stops when |Q - (k - 1)| <= 1e-10 (k - 1), so its tau2 carries about that much error.
        else expectClose(pm.heterogeneity.tau2, ref.pm_tau2, { rtol: 1e-8, label: "PM tau2 (statsmodels)" });
        expectClose(pm.coefficients[0]!.estimate, ref.pm_mean, { rtol: 1e-9, label: "PM pooled mean (statsmodels)" });
        expectClose(pm.coefficients[0]!.standardError, ref.pm_se, { rtol: 1e-8, label: "PM SE (statsmodels)" });
        expectClose(fitMetaModel(data, { method: "pm", test: "hksj" }).coefficients[0]!.standardError, ref.pm_se_hksj, { rtol: 1e-8, label: "PM HKSJ SE (statsmodels)" });
      });
    });
  }
});
