import fc from "fast-check";
import type { SubmissionKindName } from "@/lib/ingest/schemas/vocabulary";

/**
 * Generated upload files, good and broken in the ways real files are: wrong encodings, ragged
 * rows, missing, blank and duplicated headings, text/NaN/Infinity/huge numbers in numeric
 * columns, empty files, byte-order marks, quotes and line breaks inside cells, wrong delimiters,
 * repeated keys, and plain random bytes.
 */
export interface GeneratedUpload {
  fileName: string;
  bytes: Uint8Array;
  /** What was done to the file, for the failure message. */
  mutations: string[];
}

type Table = { headings: string[]; rows: string[][] };

const broodRow = fc
  .record({
    year: fc.integer({ min: 1990, max: 2020 }),
    female: fc.integer({ min: 1, max: 40 }),
    lay: fc.integer({ min: 90, max: 150 }),
    clutch: fc.integer({ min: 1, max: 12 }),
    fledgedShare: fc.double({ min: 0, max: 1, noNaN: true }),
    recruitShare: fc.double({ min: 0, max: 1, noNaN: true }),
    hatch: fc.option(fc.integer({ min: 14, max: 20 })),
  })
  .map((r) => {
    const fledged = Math.floor(r.clutch * r.fledgedShare);
    const recruits = Math.floor(fledged * r.recruitShare);
    return [String(r.year), `F-${r.female}`, String(r.lay), String(r.clutch), r.hatch === null ? "" : String(r.lay + r.hatch), String(fledged), String(recruits)];
  });

const siteYearRow = fc
  .record({ year: fc.integer({ min: 1990, max: 2020 }), peak: fc.double({ min: 120, max: 160, noNaN: true }), temp: fc.double({ min: 2, max: 15, noNaN: true }), broods: fc.integer({ min: 0, max: 300 }) })
  .map((r) => [String(r.year), r.peak.toFixed(1), r.temp.toFixed(2), String(r.broods)]);

const estimateRow = fc
  .record({
    outcome: fc.constantFrom("recruitment", "fledging_failure", "recruits_per_female"),
    level: fc.constantFrom("within_year", "between_year"),
    term: fc.constantFrom("linear", "quadratic"),
    year: fc.option(fc.integer({ min: 1990, max: 2020 })),
    value: fc.double({ min: -1, max: 1, noNaN: true }),
    se: fc.double({ min: 0.001, max: 1, noNaN: true }),
    n: fc.integer({ min: 1, max: 500 }),
  })
  .map((r) => [r.outcome, r.level, r.term, r.year === null ? "" : String(r.year), r.value.toPrecision(6), r.se.toPrecision(6), String(r.n), "per_day", "logit", "binomial GLM"]);

export const HEADINGS: Record<SubmissionKindName, string[]> = {
  brood_records: ["year", "female", "lay_date", "clutch", "hatch_date", "fledged", "recruits"],
  site_year_covariates: ["year", "food_peak", "mean_spring_temp", "broods"],
  estimates: ["outcome", "level", "term", "year", "estimate", "se", "n", "scale", "link", "method"],
};

const ROWS: Record<SubmissionKindName, fc.Arbitrary<string[]>> = {
  brood_records: broodRow,
  site_year_covariates: siteYearRow,
  estimates: estimateRow,
};

const BAD_NUMBERS = ["abc", "NaN", "Infinity", "-Infinity", "1e999", "99999999999999999999", "1,5", "", "  ", "-", "0x10", "1e-400", "∞", "12.5.3", "'7", "=1+1"];

type Mutation = (table: Table, pick: () => number) => string;

const MUTATIONS: Record<string, Mutation> = {
  badNumber: (t, pick) => {
    const row = t.rows[pick() % Math.max(1, t.rows.length)];
    if (!row) return "badNumber (no rows)";
    const column = pick() % row.length;
    row[column] = BAD_NUMBERS[pick() % BAD_NUMBERS.length]!;
    return `cell ${column} := ${JSON.stringify(row[column])}`;
  },
  dropCell: (t, pick) => {
    const row = t.rows[pick() % Math.max(1, t.rows.length)];
    row?.pop();
    return "ragged: a row one cell short";
  },
  extraCell: (t, pick) => {
    t.rows[pick() % Math.max(1, t.rows.length)]?.push("surplus");
    return "ragged: a row one cell long";
  },
  dropHeading: (t, pick) => {
    const column = pick() % t.headings.length;
    t.headings.splice(column, 1);
    for (const row of t.rows) row.splice(column, 1);
    return `column ${column} missing`;
  },
  duplicateHeading: (t, pick) => {
    const from = pick() % t.headings.length;
    const to = pick() % t.headings.length;
    t.headings[to] = t.headings[from]!;
    return `heading ${to} := heading ${from}`;
  },
  blankHeading: (t, pick) => {
    t.headings[pick() % t.headings.length] = "";
    return "a blank heading";
  },
  quotedBreak: (t, pick) => {
    const row = t.rows[pick() % Math.max(1, t.rows.length)];
    if (row) row[pick() % row.length] = '"two\nlines, and ""quotes"""';
    return "a quoted cell with a line break";
  },
  unclosedQuote: (t, pick) => {
    const row = t.rows[pick() % Math.max(1, t.rows.length)];
    if (row) row[pick() % row.length] = '"never closed';
    return "an unclosed quote";
  },
  strayQuote: (t, pick) => {
    const row = t.rows[pick() % Math.max(1, t.rows.length)];
    if (row) row[pick() % row.length] = '"closed"then more';
    return "text after a closing quote";
  },
  repeatRow: (t, pick) => {
    const row = t.rows[pick() % Math.max(1, t.rows.length)];
    if (row) t.rows.push([...row]);
    return "a repeated row";
  },
  noRows: (t) => {
    t.rows.length = 0;
    return "headings only";
  },
};

type Encoding = "utf8" | "utf8-bom" | "latin1" | "utf16le-bom" | "nul" | "bom-inside" | "empty" | "bom-only";

function encode(text: string, encoding: Encoding): Uint8Array {
  switch (encoding) {
    case "utf8":
      return new TextEncoder().encode(text);
    case "utf8-bom":
      return new TextEncoder().encode(`\uFEFF${text}`);
    case "latin1":
      return Uint8Array.from(Buffer.from(text.replace(/F-/g, "Fé-"), "latin1"));
    case "utf16le-bom":
      return Uint8Array.from(Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from(text, "utf16le")]));
    case "nul":
      return Uint8Array.from(Buffer.concat([Buffer.from(text.slice(0, 20)), Buffer.from([0]), Buffer.from(text.slice(20))]));
    case "bom-inside":
      return new TextEncoder().encode(text.replace("\n", "\n\uFEFF"));
    case "empty":
      return new Uint8Array(0);
    case "bom-only":
      return Uint8Array.from([0xef, 0xbb, 0xbf]);
  }
}

function serialise(table: Table, delimiter: string, newline: string): string {
  const cell = (text: string) => (text.startsWith('"') ? text : text.includes(delimiter) || text.includes("\n") ? `"${text.replace(/"/g, '""')}"` : text);
  return [table.headings, ...table.rows].map((r) => r.map(cell).join(delimiter)).join(newline) + newline;
}

/** Files of one kind: mostly broken, some intact (so acceptance is exercised too), some random bytes. */
export function generatedUploads(kind: SubmissionKindName): fc.Arbitrary<GeneratedUpload> {
  const structured = fc
    .record({
      rows: fc.array(ROWS[kind], { minLength: 0, maxLength: 8 }),
      mutations: fc.array(fc.constantFrom(...Object.keys(MUTATIONS)), { minLength: 0, maxLength: 3 }),
      picks: fc.array(fc.nat({ max: 1000 }), { minLength: 12, maxLength: 12 }),
      delimiter: fc.constantFrom(",", ";", "\t"),
      newline: fc.constantFrom("\n", "\r\n"),
      encoding: fc.constantFrom<Encoding>("utf8", "utf8", "utf8", "utf8", "utf8-bom", "latin1", "utf16le-bom", "nul", "bom-inside", "empty", "bom-only"),
    })
    .map(({ rows, mutations, picks, delimiter, newline, encoding }) => {
      const table: Table = { headings: [...HEADINGS[kind]], rows: rows.map((r) => [...r]) };
      let next = 0;
      const pick = () => picks[next++ % picks.length]!;
      const done = mutations.map((m) => MUTATIONS[m]!(table, pick));
      const text = serialise(table, delimiter, newline);
      return {
        fileName: `${kind}.csv`,
        bytes: encode(text, encoding),
        mutations: [...done, `delimiter ${JSON.stringify(delimiter)}`, `encoding ${encoding}`],
      };
    });
  const randomBytes = fc.uint8Array({ maxLength: 300 }).map((bytes) => ({ fileName: `${kind}.csv`, bytes, mutations: ["random bytes"] }));
  const randomText = fc.string({ maxLength: 300 }).map((text) => ({ fileName: `${kind}.csv`, bytes: new TextEncoder().encode(text), mutations: ["random text"] }));
  return fc.oneof({ arbitrary: structured, weight: 8 }, { arbitrary: randomBytes, weight: 1 }, { arbitrary: randomText, weight: 1 });
}
