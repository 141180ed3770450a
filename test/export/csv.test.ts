import { describe, expect, it } from "vitest";
import fc from "fast-check";
import Papa from "papaparse";
import { csvCell, neutraliseFormula, restoreNeutralisedCell, toCsv } from "@/lib/export/csv";

/**
 * The one CSV writer. Its output is read back with papaparse (an independent RFC 4180 parser);
 * formula neutralisation follows OWASP's "CSV Injection" advice (common practice): a leading
 * apostrophe on text that starts with =, +, -, @, tab or carriage return.
 */
describe("CSV cells", () => {
  it("neutralises text that a spreadsheet would run as a formula", () => {
    expect(csvCell("=SUM(A1:A9)")).toBe("'=SUM(A1:A9)");
    expect(csvCell("+1")).toBe("'+1");
    expect(csvCell("-F12")).toBe("'-F12");
    expect(csvCell("@cmd")).toBe("'@cmd");
    expect(csvCell("\tx")).toBe("'\tx");
    expect(csvCell("F-12")).toBe("F-12");
  });

  it("keeps numbers numeric and unquoted, negative ones included, in full precision", () => {
    expect(csvCell(-0.125)).toBe("-0.125");
    expect(csvCell(0.1 + 0.2)).toBe("0.30000000000000004");
    expect(csvCell(-1e-300)).toBe("-1e-300");
    expect(csvCell(42)).toBe("42");
    expect(csvCell(null)).toBe("");
    expect(csvCell(true)).toBe("true");
  });

  it("refuses NaN and infinities instead of writing them", () => {
    expect(() => csvCell(Number.NaN)).toThrow(/only finite numbers/);
    expect(() => csvCell(Number.POSITIVE_INFINITY)).toThrow(/only finite numbers/);
  });

  it("quotes text holding separators, quotes, line breaks or edge spaces", () => {
    expect(csvCell('said "hi", left')).toBe('"said ""hi"", left"');
    expect(csvCell("two\nlines")).toBe('"two\nlines"');
    expect(csvCell(" padded")).toBe('" padded"');
  });

  it("restores exactly the text it neutralised, including text that already starts with apostrophes", () => {
    fc.assert(
      fc.property(fc.string({ unit: fc.constantFrom("'", "=", "-", "+", "@", "\t", "a", "1", " ") }), (text) => {
        expect(restoreNeutralisedCell(neutraliseFormula(text))).toBe(text);
        expect(neutraliseFormula(text).startsWith("'") || !/^'*[=+\-@\t\r]/.test(text)).toBe(true);
      }),
      { numRuns: 2000 },
    );
  });
});

describe("a CSV document", () => {
  const rows = [
    { name: "Oak, north", value: -0.5, note: "=1+1", n: 3 },
    { name: 'the "big" wood', value: 1.25e-7, note: null, n: 0 },
    { name: "Fjällbacka\r\nsecond line", value: 0, note: "-", n: -2 },
  ];
  const csv = toCsv(
    [
      { header: "name", value: (r: (typeof rows)[number]) => r.name },
      { header: "value", value: (r) => r.value },
      { header: "note", value: (r) => r.note },
      { header: "n", value: (r) => r.n },
    ],
    rows,
  );

  it("has a header row and CRLF line ends", () => {
    expect(csv.startsWith("name,value,note,n\r\n")).toBe(true);
    expect(csv.endsWith("\r\n")).toBe(true);
  });

  it("reads back with papaparse to the same cells, numbers as numbers", () => {
    const parsed = Papa.parse<Record<string, unknown>>(csv, { header: true, dynamicTyping: true, skipEmptyLines: true });
    expect(parsed.errors).toEqual([]);
    expect(parsed.data).toEqual([
      { name: "Oak, north", value: -0.5, note: "'=1+1", n: 3 },
      { name: 'the "big" wood', value: 1.25e-7, note: null, n: 0 },
      { name: "Fjällbacka\r\nsecond line", value: 0, note: "'-", n: -2 },
    ]);
  });
});
