import { describe, expect, it } from "vitest";
import { proposeMapping } from "@/lib/ingest/column-mapping";
import { unreadColumnWarnings } from "@/lib/ingest/unread-columns";

/** The columns of a file that no field reads are named, with how to have them read; none is dropped unsaid. */
const headings = ["female", "year", "lay date", "clutch size", "hatching day", "fledged", "recruits"];

describe("columns no field reads", () => {
  it("are the headings the proposed mapping leaves over, blank headings aside", () => {
    const proposal = proposeMapping("brood_records", [...headings, "", "observer"], null);
    expect(proposal.mapping).toEqual({ year: "year", femaleId: "female", layDate: "lay date", clutchSize: "clutch size", fledglings: "fledged", recruits: "recruits" });
    expect(proposal.unusedHeadings).toEqual(["hatching day", "observer"]);
    // Mapped by the user, "hatching day" is read and no longer left over.
    expect(proposeMapping("brood_records", headings, null, { hatchDate: "hatching day" }).unusedHeadings).toEqual([]);
  });

  it("are named in one warning with the fields that still have no column", () => {
    const warnings = unreadColumnWarnings("brood_records", proposeMapping("brood_records", headings, null), []);
    expect(warnings).toEqual([
      {
        code: "unused_columns",
        message:
          'the column "hatching day" was not read: no field is mapped to it, so its values are not stored. ' +
          "To read it, map a field to its heading in the column mapping (field -> heading; fields without a column: site code (siteCode), hatch date (hatchDate)) and upload again.",
      },
    ]);
    const two = unreadColumnWarnings("brood_records", proposeMapping("brood_records", [...headings, "box"], null), []);
    expect(two[0]!.message).toMatch(/^the columns "hatching day", "box" were not read: no field is mapped to them, so their values are not stored\. To read one, map a field to the heading/);
  });

  it("say so when every field already has a column", () => {
    const full = [...headings.filter((h) => h !== "hatching day"), "hatch date", "site", "notes"];
    const [warning] = unreadColumnWarnings("brood_records", proposeMapping("brood_records", full, null), []);
    expect(warning!.message).toBe('the column "notes" was not read: no field is mapped to it, so its values are not stored. Every field of a brood_records upload already has a column, so there is no field left to read it into.');
  });

  it("include columns with an empty heading only when they hold values", () => {
    const proposal = proposeMapping("brood_records", headings, null, { hatchDate: "hatching day" });
    expect(unreadColumnWarnings("brood_records", proposal, [{ column: 8, rowsWithValues: 0 }])).toEqual([]);
    expect(unreadColumnWarnings("brood_records", proposal, [{ column: 8, rowsWithValues: 1 }, { column: 9, rowsWithValues: 0 }])).toEqual([
      { code: "unheaded_columns", message: "column 8 (values in 1 row) has no heading, so its values were not read. Give it a heading and map a field to it to have the values read." },
    ]);
    expect(unreadColumnWarnings("brood_records", null, [])).toEqual([]);
  });
});
