import { describe, expect, it } from "vitest";
import { asPhase, runInSlices, runToCompletion, type Stepwise } from "@/lib/stats/stepwise";

/** Sums 1..n, one step per term: a computation whose result is known in closed form, n(n + 1)/2. */
function* triangular(n: number): Stepwise<number> {
  let sum = 0;
  for (let i = 1; i <= n; i += 1) {
    sum += i;
    yield { fraction: i / n, message: `${i} of ${n}` };
  }
  return sum;
}

describe("stepwise computations", () => {
  it("give the same result straight through and in slices (Gauss's n(n + 1)/2)", async () => {
    expect(runToCompletion(triangular(1000))).toBe(500_500);
    expect(await runInSlices(triangular(1000), { sliceMs: 0 })).toBe(500_500);
  });

  it("report every step when slices are 0 ms long, in order", async () => {
    const fractions: number[] = [];
    await runInSlices(triangular(4), {
      sliceMs: 0,
      onStep: async (step) => {
        fractions.push(step.fraction);
      },
    });
    expect(fractions).toEqual([0.25, 0.5, 0.75, 1]);
  });

  it("give way to timers between slices", async () => {
    let timerRan = false;
    setTimeout(() => {
      timerRan = true;
    }, 1);
    // Steps that take a while: the timer must fire before the last one.
    function* slow(): Stepwise<boolean> {
      const until = performance.now() + 50;
      while (performance.now() < until) yield { fraction: 0, message: "waiting" };
      return timerRan;
    }
    expect(await runInSlices(slow(), { sliceMs: 5 })).toBe(true);
  });

  it("stop between steps when the signal is aborted or the progress report throws", async () => {
    const controller = new AbortController();
    let steps = 0;
    await expect(
      runInSlices(triangular(100), {
        sliceMs: 0,
        signal: controller.signal,
        onStep: async () => {
          steps += 1;
          if (steps === 3) controller.abort(new Error("cancelled by the user"));
        },
      }),
    ).rejects.toThrow("cancelled by the user");
    expect(steps).toBe(3);
    await expect(runInSlices(triangular(100), { sliceMs: 0, onStep: async () => Promise.reject(new Error("stop")) })).rejects.toThrow("stop");
  });

  it("map a part's fractions into its share of the whole", () => {
    function* whole(): Stepwise<number> {
      const first = yield* asPhase(triangular(2), 0, 0.5);
      const second = yield* asPhase(triangular(2), 0.5, 1);
      return first + second;
    }
    const seen: number[] = [];
    const run = whole();
    for (let next = run.next(); ; next = run.next()) {
      if (next.done) {
        expect(next.value).toBe(6);
        break;
      }
      seen.push(next.value.fraction);
    }
    expect(seen).toEqual([0.25, 0.5, 0.75, 1]);
  });
});
