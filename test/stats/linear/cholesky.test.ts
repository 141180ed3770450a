import { describe, expect, it } from "vitest";
import { choleskyFactor, choleskyInverse, choleskyLogDeterminant, choleskySolve } from "@/lib/stats/linear/cholesky";
import { expectAllClose, expectClose } from "@/test/helpers/expect-close";

describe("Cholesky factorisation", () => {
  // Worked example by hand: A = [[4,2],[2,3]] = L L' with L = [[2,0],[1,sqrt 2]]; det A = 8.
  const a = Float64Array.of(4, 2, 2, 3);

  it("factorises a positive-definite matrix (hand calculation)", () => {
    const outcome = choleskyFactor(a, 2);
    expect(outcome.ok).toBe(true);
    if (!outcome.ok) return;
    expectAllClose(outcome.factor.lower, [2, 0, 1, Math.SQRT2], { rtol: 1e-15, atol: 1e-15 });
    expectClose(choleskyLogDeterminant(outcome.factor), Math.log(8), { rtol: 1e-14 });
  });

  it("solves and inverts (inverse of [[4,2],[2,3]] is [[3,-2],[-2,4]]/8, by hand)", () => {
    const outcome = choleskyFactor(a, 2);
    if (!outcome.ok) throw new Error("expected a factor");
    expectAllClose(choleskySolve(outcome.factor, Float64Array.of(8, 7)), [1.25, 1.5], { rtol: 1e-14 });
    expectAllClose(choleskyInverse(outcome.factor), [3 / 8, -2 / 8, -2 / 8, 4 / 8], { rtol: 1e-14 });
  });

  it("names the first column that depends on earlier ones", () => {
    // Columns of X = [1, x, 2x] give a singular X'X whose third column depends on the second.
    const x = [1, 2, 3, 4];
    const cols = [x.map(() => 1), x, x.map((v) => 2 * v)];
    const xtx = new Float64Array(9);
    for (let i = 0; i < 3; i += 1) for (let j = 0; j < 3; j += 1) xtx[i * 3 + j] = cols[i]!.reduce((s, v, r) => s + v * cols[j]![r]!, 0);
    expect(choleskyFactor(xtx, 3)).toEqual({ ok: false, column: 2 });
  });

  it("rejects a zero or negative diagonal", () => {
    expect(choleskyFactor(Float64Array.of(0), 1)).toEqual({ ok: false, column: 0 });
    expect(choleskyFactor(Float64Array.of(-1), 1)).toEqual({ ok: false, column: 0 });
    expect(choleskyFactor(Float64Array.of(Number.NaN), 1)).toEqual({ ok: false, column: 0 });
  });
});
