import { describe, expect, it } from "vitest";
import { broodMismatch, describeMismatch } from "@/lib/estimates/mismatch";
import { centreWithinGroups } from "@/lib/estimates/within-year-centring";

describe("mismatch definitions (hand calculations)", () => {
  it("lay date + offset - food peak; late broods positive", () => {
    expect(broodMismatch({ basis: "lay_date", offsetDays: 30 }, { layDateDoy: 110, hatchDateDoy: null }, 135)).toBe(5);
    expect(broodMismatch({ basis: "lay_date", offsetDays: 25 }, { layDateDoy: 100, hatchDateDoy: null }, 140)).toBe(-15);
  });
  it("hatch date + nestling age at peak demand - food peak, and refuses a missing hatch date", () => {
    expect(broodMismatch({ basis: "hatch_date", offsetDays: 9 }, { layDateDoy: 110, hatchDateDoy: 131 }, 135)).toBe(5);
    expect(() => broodMismatch({ basis: "hatch_date", offsetDays: 9 }, { layDateDoy: 110, hatchDateDoy: null }, 135)).toThrow(/hatch date/);
  });
  it("states the offset actually used", () => {
    expect(describeMismatch({ basis: "lay_date", offsetDays: 27 })).toContain("lay date + 27 d");
    expect(describeMismatch({ basis: "hatch_date", offsetDays: 9 })).toContain("hatch date + 9 d");
  });
});

describe("within-year centring (van de Pol & Wright 2009)", () => {
  it("splits a predictor into deviations from the year mean and the year mean", () => {
    const centred = centreWithinGroups([1, 3, 10, 2], [2001, 2001, 2002, 2001]);
    expect(Array.from(centred.within)).toEqual([-1, 1, 0, 0]);
    expect(centred.groupMeans.get(2001)).toBe(2);
    expect(centred.groupMeans.get(2002)).toBe(10);
    expect(centred.groupSizes.get(2001)).toBe(3);
  });
  it("rejects mismatched lengths", () => {
    expect(() => centreWithinGroups([1, 2], [1])).toThrow(RangeError);
  });
});
