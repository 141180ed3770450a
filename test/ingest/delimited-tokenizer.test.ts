import { describe, expect, it } from "vitest";
import fc from "fast-check";
import Papa from "papaparse";
import { DelimitedTokenizer, detectDelimiter, type Delimiter, type QuotingIssue } from "@/lib/ingest/delimited-tokenizer";
import csvFixture from "@/test/fixtures/python-stdlib/csv-records.json";

function tokenize(text: string, delimiter: Delimiter, chunkSize = text.length || 1) {
  const tokenizer = new DelimitedTokenizer(delimiter);
  const records: { cells: string[]; line: number; issues: QuotingIssue[] | null }[] = [];
  const onRecord = (cells: string[], line: number, issues: QuotingIssue[] | null) => records.push({ cells, line, issues });
  for (let start = 0; start < text.length; start += chunkSize) tokenizer.push(text.slice(start, start + chunkSize), onRecord);
  tokenizer.end(onRecord);
  return records;
}

describe("splitting delimited text into records", () => {
  // Reference: Python's csv module (csv.reader, strict=True) on the same texts, test/fixtures/python-stdlib/.
  it.each(csvFixture.cases)("splits '$name' as Python's csv module does, whatever the chunk size", (fixture) => {
    for (const chunkSize of [1, 2, 3, 7, 1000]) {
      const records = tokenize(fixture.text, fixture.delimiter as Delimiter, chunkSize);
      // Python drops the blank records our reader skips later; compare the non-blank ones.
      const nonBlank = records.filter((r) => !(r.cells.length === 1 && r.cells[0] === "")).map((r) => r.cells);
      expect(nonBlank, `${fixture.name}, chunks of ${chunkSize}`).toEqual(fixture.records);
      expect(records.every((r) => r.issues === null)).toBe(true);
    }
  });

  it("numbers each record by the line it starts on, counting line breaks inside quotes and CRLF once", () => {
    const text = 'a,b\r\n"x\r\ny",1\r\n\r\nlast,2';
    for (const chunkSize of [1, 4, 100]) {
      expect(tokenize(text, ",", chunkSize).map((r) => [r.line, r.cells])).toEqual([
        [1, ["a", "b"]],
        [2, ["x\r\ny", "1"]],
        [4, [""]],
        [5, ["last", "2"]],
      ]);
    }
  });

  it("reports a quote that is never closed, and text after a closing quote, with the line and cell", () => {
    const unclosed = tokenize('a,b\n1,"open\n2,3\n', ",");
    expect(unclosed.at(-1)!.issues).toEqual([{ kind: "unclosed_quote", line: 2, cellIndex: 1 }]);
    const stray = tokenize('a,b\n"x"y,2\n', ",");
    expect(stray[1]!.issues).toEqual([{ kind: "text_after_closing_quote", line: 2, cellIndex: 0 }]);
    expect(stray[1]!.cells).toEqual(["xy", "2"]);
  });

  it("guesses the delimiter from the headings and the first rows", () => {
    expect(detectDelimiter("year;lay date;temp\n2011;105;7,5\n2012;110;8,25\n")).toBe(";");
    expect(detectDelimiter("year,lay date\n2011,105\n")).toBe(",");
    expect(detectDelimiter("year\tlay, date\n2011\t105\n")).toBe("\t");
    expect(detectDelimiter("only one column\n1\n")).toBe(",");
  });

  // Reference: papaparse 5.5, a general-purpose CSV parser, on well-formed RFC 4180 text.
  it("agrees with papaparse on generated well-formed files (500 cases)", () => {
    const cell = fc.oneof(fc.string({ maxLength: 6 }), fc.constantFrom('"', ",", ";", "\n", "\r\n", "\t", " ", "é", '""'));
    const table = fc.array(fc.array(fc.string({ unit: cell, maxLength: 4 }), { minLength: 2, maxLength: 4 }), { minLength: 1, maxLength: 6 });
    fc.assert(
      fc.property(table, fc.constantFrom<Delimiter>(",", ";", "\t"), fc.integer({ min: 1, max: 9 }), (rows, delimiter, chunkSize) => {
        const width = rows[0]!.length;
        const uniform = rows.map((r) => Array.from({ length: width }, (_, i) => r[i] ?? ""));
        const text = uniform.map((r) => r.map((c) => `"${c.replace(/"/g, '""')}"`).join(delimiter)).join("\r\n");
        const ours = tokenize(text, delimiter, chunkSize).map((r) => r.cells);
        const theirs = Papa.parse<string[]>(text, { delimiter, newline: "\r\n" }).data;
        expect(ours).toEqual(theirs);
        expect(ours).toEqual(uniform);
      }),
      { numRuns: 500, seed: 20111 },
    );
  });
});
