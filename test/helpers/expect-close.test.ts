import { describe, expect, it } from "vitest";
import { expectClose } from "./expect-close";

describe("expectClose", () => {
  it("accepts values within the relative tolerance", () => {
    expectClose(1.0000001, 1, { rtol: 1e-6 });
  });
  it("rejects values outside the tolerance and NaN", () => {
    expect(() => expectClose(1.1, 1, { rtol: 1e-6 })).toThrow(/difference/);
    expect(() => expectClose(Number.NaN, 1, { rtol: 1 })).toThrow();
    expect(() => expectClose(Number.NaN, Number.NaN)).toThrow();
  });
});
