/**
 * The generated (unrolled) cross-product and residual kernels give the sums of the plain nested
 * loop, for every p up to the unrolling limit and beyond, at every level. The nested loop itself is
 * checked by hand on a 2 x 2 example.
 */
import { describe, it } from "vitest";
import {
  crossProductKernel,
  kernelOutputLength,
  referenceCrossProductKernel,
  referenceTau2CrossProductKernel,
  residualKernel,
  tau2CrossProductKernel,
  type KernelLevel,
} from "@/lib/stats/meta/cross-product-kernel";
import { createRandomStream } from "@/lib/stats/random/xoshiro128";
import { expectAllClose } from "@/test/helpers/expect-close";

describe("cross-product kernels", () => {
  it("forms sum w, sum wu, X'Wy and the packed X'WX, X'WUX, X'WU^2X (hand calculation)", () => {
    // Rows x = (1, 2) and (1, 3); w = (2, 1); u = (0.5, 1); y = (1, 4).
    const out = new Float64Array(kernelOutputLength(2));
    crossProductKernel(2, 2)(Float64Array.of(1, 2, 1, 3), 2, Float64Array.of(2, 1), Float64Array.of(0.5, 1), Float64Array.of(1, 4), out);
    // sum w = 3; sum w u = 1 + 1 = 2; X'Wy = (2*1 + 4, 2*2 + 3*4) = (6, 16);
    // X'WX packed (11, 21, 22) = (3, 2*2 + 3, 2*4 + 9) = (3, 7, 17); X'WUX with wu = (1, 1): (2, 5, 13);
    // X'WU^2X with wuu = (0.5, 1): (1.5, 4, 11).
    expectAllClose(out, [3, 2, 6, 16, 3, 7, 17, 2, 5, 13, 1.5, 4, 11, 0], { rtol: 1e-15, label: "sums (the log sum is 0 with given weights)" });
  });

  it("unrolled and nested-loop kernels agree for p = 1..10 at every level", () => {
    const random = createRandomStream(7);
    for (let p = 1; p <= 10; p += 1) {
      const k = 37;
      const design = Float64Array.from({ length: k * p }, () => random.nextFloat() * 4 - 2);
      const weights = Float64Array.from({ length: k }, () => random.nextFloat() + 0.1);
      const unit = Float64Array.from({ length: k }, () => random.nextFloat() + 0.1);
      const y = Float64Array.from({ length: k }, () => random.nextFloat());
      for (const level of [0, 1, 2] as KernelLevel[]) {
        const fast = new Float64Array(kernelOutputLength(p));
        const plain = new Float64Array(kernelOutputLength(p));
        crossProductKernel(p, level)(design, k, weights, unit, y, fast);
        referenceCrossProductKernel(p, level)(design, k, weights, unit, y, plain);
        expectAllClose(fast, plain, { rtol: 1e-13, atol: 1e-13, label: `p = ${p}, level ${level}` });
      }
      const beta = Float64Array.from({ length: p }, () => random.nextFloat());
      const residual = new Float64Array(2);
      residualKernel(p)(design, k, beta, y, weights, unit, residual);
      let q = 0;
      let slope = 0;
      for (let i = 0; i < k; i += 1) {
        let fitted = 0;
        for (let j = 0; j < p; j += 1) fitted += design[i * p + j]! * beta[j]!;
        q += weights[i]! * (y[i]! - fitted) ** 2;
        slope += weights[i]! * unit[i]! * (y[i]! - fitted) ** 2;
      }
      expectAllClose(residual, [q, slope], { rtol: 1e-13, label: `residual kernel p = ${p}` });
    }
  });
});

describe("kernels that form the weights at a trial tau^2 in the same pass", () => {
  it("agree with the nested loop, write u and w, and sum a log(v + tau^2)", () => {
    const random = createRandomStream(8);
    for (const p of [1, 3, 4, 9]) {
      const k = 23;
      const design = Float64Array.from({ length: k * p }, () => random.nextFloat() * 4 - 2);
      const variances = Float64Array.from({ length: k }, () => random.nextFloat() + 0.01);
      const caseWeights = Float64Array.from({ length: k }, () => 1 + Math.floor(3 * random.nextFloat()));
      const y = Float64Array.from({ length: k }, () => random.nextFloat());
      for (const withCaseWeights of [false, true]) {
        for (const level of [0, 1, 2] as KernelLevel[]) {
          const results = [tau2CrossProductKernel(p, level, withCaseWeights, true), referenceTau2CrossProductKernel(p, level, withCaseWeights, true)].map((kernel) => {
            const out = new Float64Array(kernelOutputLength(p));
            const unit = new Float64Array(k);
            const weights = new Float64Array(k);
            kernel(design, k, variances, 0.3, withCaseWeights ? caseWeights : null, y, unit, weights, out);
            return { out, unit, weights };
          });
          expectAllClose(results[0]!.out, results[1]!.out, { rtol: 1e-13, atol: 1e-13, label: `p = ${p}, level ${level}` });
          const a = (i: number) => (withCaseWeights ? caseWeights[i]! : 1);
          expectAllClose(results[0]!.unit, Array.from(variances, (v) => 1 / (v + 0.3)), { rtol: 1e-15, label: "u" });
          expectAllClose(results[0]!.weights, Array.from(variances, (v, i) => a(i) / (v + 0.3)), { rtol: 1e-15, label: "w" });
          const logSum = Array.from(variances).reduce((sum, v, i) => sum + a(i) * Math.log(v + 0.3), 0);
          expectAllClose([results[0]!.out[kernelOutputLength(p) - 1]!], [logSum], { rtol: 1e-13, label: "sum a log(v + tau2)" });
        }
      }
    }
  });
});
