import { describe, expect, it } from "vitest";
import { formatCount, formatLatitude, formatPValue, formatSignificant } from "@/lib/format/numbers";

describe("number formatting", () => {
  it("keeps significant digits and switches to exponent form for extreme magnitudes", () => {
    expect(formatSignificant(-0.714059, 4)).toBe("-0.7141");
    expect(formatSignificant(0.00001234, 3)).toBe("1.23e-5");
    expect(formatSignificant(0)).toBe("0");
    expect(formatSignificant(Number.NaN)).toBe("NaN");
  });
  it("prints small p-values as < 0.001 (common practice in reporting)", () => {
    expect(formatPValue(0.0004)).toBe("< 0.001");
    expect(formatPValue(0.04321)).toBe("0.043");
  });
  it("writes hemispheres and groups thousands", () => {
    expect(formatLatitude(-12.5)).toBe("12.50\u00a0S");
    expect(formatCount(1234567)).toBe("1\u2009234\u2009567");
  });
});
