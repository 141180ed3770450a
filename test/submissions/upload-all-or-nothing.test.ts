import { afterAll, beforeAll, describe, expect, it } from "vitest";
import fc from "fast-check";
import type { Actor } from "@/lib/auth/actor";
import { AppError } from "@/lib/errors/app-error";
import type { SubmissionKindName } from "@/lib/ingest/schemas/vocabulary";
import { uploadSourceFromBytes } from "@/lib/ingest/upload-source";
import { acceptUpload } from "@/lib/submissions/accept-upload";
import { createTestDatabase, testProviders, type TestDatabase } from "@/test/helpers/test-databases";
import { generatedUploads } from "@/test/ingest/malformed-uploads";
import { tableCounts } from "./table-counts";

const providers = await testProviders();
const KINDS: SubmissionKindName[] = ["brood_records", "site_year_covariates", "estimates"];
/** Generated files per kind and provider. */
const RUNS_PER_KIND = 1_000;
const actor: Actor = { kind: "user", userId: null, role: "coordinator", label: "property test", siteIds: [], via: "none" };

/**
 * Property: accepting any generated file either refuses it with an AppError whose every field
 * error names the file and a column, leaving every table as it was, or writes exactly one new
 * current submission holding exactly its rows (or, for the same file again, nothing).
 */
describe.each(providers)("accepting generated files on %s is all or nothing", (provider) => {
  let database: TestDatabase;
  beforeAll(async () => {
    database = await createTestDatabase(provider);
    const species = await database.db.species.create({ data: { scientificName: "Parus major", commonName: "Great tit" } });
    await database.db.site.create({ data: { code: "OAK", name: "Oak", speciesId: species.id, latitude: 52, longitude: 1, firstYear: 1990, lastYear: 2020 } });
  });
  afterAll(async () => {
    await database.drop();
  });

  const snapshot = () => tableCounts(database.db);
  const rowTable = { brood_records: "broods", site_year_covariates: "siteYears", estimates: "estimates" } as const;

  it.each(KINDS)("for %s files", async (kind) => {
    let accepted = 0;
    let refused = 0;
    await fc.assert(
      fc.asyncProperty(generatedUploads(kind), async (upload) => {
        const before = await snapshot();
        const outcome = await acceptUpload(database.db, uploadSourceFromBytes(upload.fileName, upload.bytes), { siteCode: "OAK", kind }, actor, {
          maxBytes: 1 << 20,
          maxRows: 10_000,
          maxListedProblems: 1_000,
        }).then(
          (result) => ({ result, error: null }),
          (error: unknown) => ({ result: null, error }),
        );
        const after = await snapshot();
        if (outcome.error !== null) {
          refused += 1;
          expect(outcome.error, upload.mutations.join("; ")).toBeInstanceOf(AppError);
          const error = outcome.error as AppError;
          expect(["invalid_input", "too_large"]).toContain(error.code);
          expect(error.fieldErrors.length).toBeGreaterThan(0);
          for (const fieldError of error.fieldErrors) {
            expect(fieldError.file).toBe(upload.fileName);
            expect(fieldError.field.length).toBeGreaterThan(0);
          }
          expect(after).toEqual(before);
          return;
        }
        const result = outcome.result!;
        accepted += 1;
        if (result.unchanged) {
          expect(after).toEqual(before);
          return;
        }
        expect(after.submissions).toBe(before.submissions + 1);
        expect(after[rowTable[kind]]).toBe(before[rowTable[kind]] + result.rowCount);
        expect(after.accepted.filter((s) => s.kind === kind)).toEqual([{ id: result.submissionId, kind }]);
        const stored = await database.db.submission.findUniqueOrThrow({ where: { id: result.submissionId } });
        expect(stored.rowCount).toBe(result.rowCount);
      }),
      { numRuns: RUNS_PER_KIND, seed: 4_2024 },
    );
    expect(refused).toBeGreaterThan(0);
    expect(accepted).toBeGreaterThan(0);
  }, 600_000);
});
