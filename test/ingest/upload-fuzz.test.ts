import { describe, expect, it } from "vitest";
import fc from "fast-check";
import type { SubmissionKindName } from "@/lib/ingest/schemas/vocabulary";
import { uploadSourceFromBytes } from "@/lib/ingest/upload-source";
import { scanUpload } from "@/lib/submissions/scan-upload";
import { generatedUploads } from "./malformed-uploads";

const KINDS: SubmissionKindName[] = ["brood_records", "site_year_covariates", "estimates"];
const RUNS_PER_KIND = 1_000;

/**
 * Property: whatever the file, checking it never throws, and every problem names the file, the
 * row (0 = headings or the whole file, else the data row, with its line) and a column.
 * A file without problems had every one of its records accepted.
 */
describe.each(KINDS)("checking %s files that are broken in every way real files are", (kind) => {
  it(`never throws and names row and column of every problem (${RUNS_PER_KIND} files)`, async () => {
    let rejected = 0;
    await fc.assert(
      fc.asyncProperty(generatedUploads(kind), async (upload) => {
        const scan = await scanUpload(uploadSourceFromBytes(upload.fileName, upload.bytes), {
          kind,
          siteCode: "OAK",
          convention: "jan1",
          networkSiteCodes: new Set(["OAK"]),
          decimalComma: false,
          table: {},
          mapping: null,
          remembered: null,
          limits: { maxBytes: 1 << 20, maxRows: 10_000, maxListedProblems: 1_000 },
        });
        if (scan.totals.problems > 0) rejected += 1;
        expect(scan.problems.length).toBe(scan.totals.problems);
        for (const problem of scan.problems) {
          expect(problem.file).toBe(upload.fileName);
          expect(Number.isInteger(problem.row) && problem.row >= 0, JSON.stringify(problem)).toBe(true);
          expect(problem.column.length, JSON.stringify(problem)).toBeGreaterThan(0);
          expect(problem.reason.length).toBeGreaterThan(0);
          if (problem.row > 0) expect(problem.line, JSON.stringify(problem)).toBeGreaterThanOrEqual(1);
        }
        if (scan.totals.problems === 0) {
          expect(scan.validRowCount, upload.mutations.join("; ")).toBe(scan.recordCount);
          expect(scan.validRowCount).toBeGreaterThan(0);
        }
      }),
      { numRuns: RUNS_PER_KIND, seed: 6_2011 },
    );
    // The generator must mostly produce broken files, or the property says little.
    expect(rejected).toBeGreaterThan(RUNS_PER_KIND / 2);
  }, 120_000);
});
