import { afterAll, beforeAll, describe, expect, it } from "vitest";
import Papa from "papaparse";
import { unzipSync, strFromU8 } from "fflate";
import { apiRoutes, API_ROUTES } from "@/lib/api/routes";
import { getDb } from "@/lib/db/client";
import { createTestDatabase, testProviders, type TestDatabase } from "@/test/helpers/test-databases";
import { callRoute, calls, signInTestCoordinator } from "./call-route";

/**
 * Contract of every /api/v1 route, called as Next.js calls the handlers, against a throwaway
 * database: replies parse with the registry's response schemas, bad input is 422 with field
 * errors, unknown ids 404, never a 500. CSV replies are read back with papaparse (an independent
 * RFC 4180 parser) to check formula neutralisation and that numbers stay numbers.
 */
const providers = await testProviders();

const site = (code: string, latitude: number) => ({
  code,
  name: `${code} Wood`,
  species: { scientificName: "Ficedula hypoleuca", commonName: "Pied flycatcher" },
  latitude,
  longitude: 10.5,
  firstYear: 2000,
  lastYear: 2020,
});

const brood = (femaleId: string, year = 2010, layDateDoy = 120) => ({ year, femaleId, layDateDoy, clutchSize: 7, hatchDateDoy: null, fledglings: 5, recruits: 1 });

const siteEstimate = (value: number, standardError: number, method = "logistic regression on mismatch, Wald SE") => ({
  outcome: "recruitment",
  level: "within_year",
  term: "linear",
  year: null,
  value,
  standardError,
  n: 150,
  scale: "per_day",
  link: "logit",
  method,
});

describe.each(providers)("JSON API contract on %s", (provider) => {
  let database: TestDatabase;
  const ids: { submission?: number; analysis?: number; run?: number; emptyAnalysis?: number } = {};

  beforeAll(async () => {
    database = await createTestDatabase(provider);
    process.env.DATABASE_URL = database.url;
    calls.length = 0;
    // Every route but the OpenAPI document needs a signed-in caller: these calls come from the coordinator.
    await signInTestCoordinator(database.db);
  });
  afterAll(async () => {
    await getDb().$disconnect();
    await database.drop();
  });

  it("serves its OpenAPI 3.1 document, listing every registered route", async () => {
    const reply = await callRoute(apiRoutes.openApi);
    expect(reply.status).toBe(200);
    expect(reply.body.openapi).toBe("3.1.0");
    for (const route of API_ROUTES) expect(reply.body.paths[route.path], route.path).toHaveProperty(route.method.toLowerCase());
  });

  it("creates sites, refusing a taken code (409) and a bad latitude (422, naming the field)", async () => {
    const created = await callRoute(apiRoutes.createSite, { json: { ...site("OAK", 60.1), habitat: "", notes: "=cmd|' /C calc'!A0" } });
    expect(created.status).toBe(201);
    expect(created.body).toMatchObject({ code: "OAK", habitat: null, species: { commonName: "Pied flycatcher" } });
    for (const [code, latitude] of [["BIR", 55.2], ["PIN", 48.9], ["ASH", 51.7]] as const) {
      expect((await callRoute(apiRoutes.createSite, { json: site(code, latitude) })).status).toBe(201);
    }
    const taken = await callRoute(apiRoutes.createSite, { json: site("OAK", 60.1) });
    expect(taken.status).toBe(409);
    expect(taken.body.error.code).toBe("conflict");
    const bad = await callRoute(apiRoutes.createSite, { json: { ...site("ELM", 91), lastYear: 1990 } });
    expect(bad.status).toBe(422);
    expect(bad.body.error.fieldErrors.map((e: { field: string }) => e.field).sort()).toEqual(["lastYear", "latitude"]);
  });

  it("refuses a body that is not JSON, or not sent as JSON, with 422 rather than 500", async () => {
    const notJson = await callRoute(apiRoutes.createSite, { raw: { body: "{code: OAK", contentType: "application/json" } });
    expect(notJson.status).toBe(422);
    expect(notJson.body.error.fieldErrors[0].field).toBe("(body)");
    const form = await callRoute(apiRoutes.createSite, { raw: { body: "code=OAK", contentType: "application/x-www-form-urlencoded" } });
    expect(form.status).toBe(422);
    expect(form.body.error.message).toMatch(/application\/json/);
  });

  it("lists sites and shows one; an unknown code is 404, a malformed one 422", async () => {
    const list = await callRoute(apiRoutes.listSites);
    expect(list.body.items.map((s: { code: string }) => s.code)).toEqual(["ASH", "BIR", "OAK", "PIN"]);
    expect(list.body.totals).toEqual({ sites: 4, species: 1, broods: 0, estimates: 0 });
    expect(list.body.items[0]).toMatchObject({ code: "ASH", recordYears: null });
    const one = await callRoute(apiRoutes.getSite, { params: { code: "OAK" } });
    expect(one.body.site.latitude).toBe(60.1);
    expect((await callRoute(apiRoutes.getSite, { params: { code: "NOPE" } })).status).toBe(404);
    const malformed = await callRoute(apiRoutes.getSite, { params: { code: "no such/code" } });
    expect(malformed.status).toBe(422);
    expect(malformed.body.error.fieldErrors[0].field).toBe("path.code");
  });

  it("adds moderators and sets site values, latitude being built in", async () => {
    const created = await callRoute(apiRoutes.createModerator, {
      json: { key: "warming_rate", label: "Spring warming rate", unit: "C per decade", kind: "numeric", description: "Trend of mean spring temperature." },
    });
    expect(created.status).toBe(201);
    expect((await callRoute(apiRoutes.createModerator, { json: { key: "latitude", label: "L", kind: "numeric", description: "d" } })).status).toBe(422);
    expect((await callRoute(apiRoutes.createModerator, { json: { key: "warming_rate", label: "W", kind: "numeric", description: "d" } })).status).toBe(409);
    for (const [code, rate] of [["OAK", 0.12], ["BIR", 0.31], ["PIN", 0.05], ["ASH", 0.22]] as const) {
      const set = await callRoute(apiRoutes.setModeratorValue, { params: { code, key: "warming_rate" }, json: { numericValue: rate, standardError: 0.02, source: "computed", method: "OLS trend" } });
      expect(set.status).toBe(200);
      expect(set.body).toMatchObject({ siteCode: code, numericValue: rate });
    }
    const both = await callRoute(apiRoutes.setModeratorValue, { params: { code: "OAK", key: "warming_rate" }, json: { numericValue: 1, categoricalValue: "x" } });
    expect(both.status).toBe(422);
    expect((await callRoute(apiRoutes.setModeratorValue, { params: { code: "ELM", key: "warming_rate" }, json: { numericValue: 1 } })).status).toBe(404);
    const list = await callRoute(apiRoutes.listModerators);
    expect(list.body.items.map((m: { key: string; siteCount: number }) => [m.key, m.siteCount])).toEqual([["latitude", 4], ["warming_rate", 4]]);
  });

  it("accepts a JSON submission whole, recognises the same rows again, and refuses a bad row naming it", async () => {
    const rows = [brood("F-1"), brood("-F2"), brood("F-3", 2011, 125)];
    const first = await callRoute(apiRoutes.createSubmission, { json: { siteCode: "OAK", kind: "brood_records", fileName: "oak-broods.json", rows } });
    expect(first.status).toBe(201);
    expect(first.body).toMatchObject({ unchanged: false, supersededId: null, submission: { siteCode: "OAK", rowCount: 3, status: "accepted" } });
    ids.submission = first.body.submission.id;
    const again = await callRoute(apiRoutes.createSubmission, { json: { siteCode: "OAK", kind: "brood_records", fileName: "copy.json", rows } });
    expect(again.status).toBe(200);
    expect(again.body).toMatchObject({ unchanged: true, submission: { id: ids.submission } });
    const bad = await callRoute(apiRoutes.createSubmission, { json: { siteCode: "OAK", kind: "brood_records", rows: [brood("F-1"), { ...brood("F-2"), fledglings: 9 }] } });
    expect(bad.status).toBe(422);
    expect(bad.body.error.fieldErrors).toEqual([{ row: 2, field: "fledglings", message: "fledglings 9 exceeds clutch size 7", file: "submission.json", value: "9" }]);
    expect((await callRoute(apiRoutes.createSubmission, { json: { siteCode: "ELM", kind: "brood_records", rows } })).status).toBe(404);
    // A key no field reads (hatchDate for hatchDateDoy) is refused, not dropped.
    const misspelt = await callRoute(apiRoutes.createSubmission, { json: { siteCode: "OAK", kind: "brood_records", rows: [brood("F-1"), { ...brood("F-2"), hatchDate: 140 }] } });
    expect(misspelt.status).toBe(422);
    expect(misspelt.body.error.fieldErrors).toEqual([expect.objectContaining({ row: 2, field: "hatchDate", message: expect.stringMatching(/^"hatchDate" is not a field of a brood_records row \(fields: year, femaleId, layDateDoy, clutchSize, hatchDateDoy, fledglings, recruits\)/) })]);
    expect((await callRoute(apiRoutes.listSubmissions, { query: { site: "OAK" } })).body.items.length).toBe(1);
    // The same for the other kinds: every row schema lists its fields.
    for (const [kind, row] of [
      ["site_year_covariates", { year: 2010, foodPeakDoy: 140, springTemp: 9.1 }],
      ["estimates", { ...siteEstimate(-0.1, 0.05, "Wald"), stdErr: 0.05 }],
    ] as const) {
      const refused = await callRoute(apiRoutes.createSubmission, { json: { siteCode: "OAK", kind, rows: [row] } });
      expect(refused.status, kind).toBe(422);
      expect(refused.body.error.fieldErrors.map((e: { field: string }) => e.field), kind).toContain(Object.keys(row).at(-1));
    }
    // Site-level estimates of recruitment for the analysis below (values of test/fixtures/r-stats/analysis-run-wls.json).
    const estimates: [string, number, number, string?][] = [["OAK", -0.12, 0.04, "=HYPERLINK(\"http://example.org\")"], ["BIR", -0.045, 0.025], ["PIN", -0.21, 0.06], ["ASH", -0.08, 0.035]];
    for (const [code, value, se, method] of estimates) {
      const reply = await callRoute(apiRoutes.createSubmission, { json: { siteCode: code, kind: "estimates", rows: [siteEstimate(value, se, method)] } });
      expect(reply.status).toBe(201);
    }
  });

  it("accepts a file uploaded as multipart/form-data, and refuses a bad file naming its row and column", async () => {
    const csv = "female,year,lay date,clutch size,hatch date,fledged,recruits\nB-1,2010,121,8,,6,1\nB-2,2010,125,7,,5,0\n";
    const form = new FormData();
    form.set("file", new File([csv], "bir-broods.csv", { type: "text/csv" }));
    form.set("siteCode", "BIR");
    form.set("kind", "brood_records");
    const uploaded = await callRoute(apiRoutes.createSubmission, { form });
    expect(uploaded.status).toBe(201);
    expect(uploaded.body).toMatchObject({ unchanged: false, submission: { siteCode: "BIR", fileName: "bir-broods.csv", rowCount: 2 }, recomputeJobId: expect.any(Number) });
    const bad = new FormData();
    bad.set("file", new File([csv.replace("B-2,2010,125,7,,5,0", "B-2,2010,125,7,,9,0")], "bad.csv"));
    bad.set("siteCode", "BIR");
    bad.set("kind", "brood_records");
    const refused = await callRoute(apiRoutes.createSubmission, { form: bad });
    expect(refused.status).toBe(422);
    expect(refused.body.error.fieldErrors[0]).toMatchObject({ file: "bad.csv", row: 2 });
    const noFile = new FormData();
    noFile.set("siteCode", "BIR");
    const missing = await callRoute(apiRoutes.createSubmission, { form: noFile });
    expect(missing.status).toBe(422);
    expect(missing.body.error.fieldErrors[0].field).toBe("file");
  });

  it("accepts a file with a column no field reads, and names that column in the reply; mapped, it is read", async () => {
    // "hatching day" is meant as the hatch date, but is none of that field's names or aliases.
    const csv = "female,year,lay date,clutch size,hatching day,fledged,recruits\nB-1,2010,121,8,135,6,1\nB-2,2010,125,7,139,5,0\n";
    const form = (mapping?: string) => {
      const data = new FormData();
      data.set("file", new File([csv], "bir-hatching.csv", { type: "text/csv" }));
      data.set("siteCode", "BIR");
      data.set("kind", "brood_records");
      if (mapping) data.set("mapping", mapping);
      return data;
    };
    const unmapped = await callRoute(apiRoutes.createSubmission, { form: form() });
    expect(unmapped.status).toBe(201);
    expect(unmapped.body.unusedHeadings).toEqual(["hatching day"]);
    expect(unmapped.body.warnings).toHaveLength(1);
    expect(unmapped.body.warnings[0].code).toBe("unused_columns");
    expect(unmapped.body.warnings[0].message).toMatch(/^the column "hatching day" was not read: no field is mapped to it, so its values are not stored\. To read it, map a field to its heading in the column mapping .*hatch date \(hatchDate\)/);
    const stored = await callRoute(apiRoutes.listBroodRecords, { query: { site: "BIR" } });
    expect(stored.body.items.map((b: { hatchDateDoy: number | null }) => b.hatchDateDoy)).toEqual([null, null]);
    const mapped = await callRoute(apiRoutes.createSubmission, { form: form(JSON.stringify({ hatchDate: "hatching day" })) });
    expect(mapped.status).toBe(201);
    expect(mapped.body).toMatchObject({ unusedHeadings: [], warnings: [] });
    const read = await callRoute(apiRoutes.listBroodRecords, { query: { site: "BIR" } });
    expect(read.body.items.map((b: { femaleId: string; hatchDateDoy: number | null }) => [b.femaleId, b.hatchDateDoy])).toEqual([["B-1", 135], ["B-2", 139]]);
  });

  it("restores a superseded submission as a new current one; restoring the current one is 409", async () => {
    const newer = await callRoute(apiRoutes.createSubmission, { json: { siteCode: "OAK", kind: "brood_records", fileName: "oak-v2.json", rows: [brood("F-1"), brood("F-9", 2012)] } });
    expect(newer.body.supersededId).toBe(ids.submission);
    const restored = await callRoute(apiRoutes.restoreSubmission, { params: { id: String(ids.submission) } });
    expect(restored.status).toBe(201);
    expect(restored.body).toMatchObject({ restoredFromId: ids.submission, supersededId: newer.body.submission.id, rowCount: 3 });
    const current = await callRoute(apiRoutes.restoreSubmission, { params: { id: String(restored.body.submissionId) } });
    expect(current.status).toBe(409);
    const stale = await callRoute(apiRoutes.restoreSubmission, { params: { id: String(ids.submission) }, json: { expectedCurrentSubmissionId: "latest" } });
    expect(stale.status).toBe(422);
    expect(stale.body.error.fieldErrors[0].field).toBe("expectedCurrentSubmissionId");
    expect((await callRoute(apiRoutes.restoreSubmission, { params: { id: "999999" } })).status).toBe(404);
    ids.submission = restored.body.submissionId;
  });

  it("lists submissions by filter and shows one; unknown parameters and values are refused", async () => {
    const list = await callRoute(apiRoutes.listSubmissions, { query: { site: "OAK", kind: "brood_records" } });
    expect(list.body.items.map((s: { fileName: string; status: string }) => [s.fileName, s.status])).toEqual([
      ["oak-broods.json", "accepted"],
      ["oak-v2.json", "superseded"],
      ["oak-broods.json", "superseded"],
    ]);
    const estimates = await callRoute(apiRoutes.listSubmissions, { query: { kind: "estimates", site: ["OAK", "BIR"] } });
    expect(estimates.body.items).toHaveLength(2);
    const unknown = await callRoute(apiRoutes.listSubmissions, { query: { sites: "OAK" } });
    expect(unknown.status).toBe(422);
    expect(unknown.body.error.fieldErrors[0].field).toBe("query.sites");
    expect((await callRoute(apiRoutes.listSubmissions, { query: { kind: "photos" } })).status).toBe(422);
    const one = await callRoute(apiRoutes.getSubmission, { params: { id: String(ids.submission) } });
    expect(one.body).toMatchObject({ id: ids.submission, kind: "brood_records", rowCount: 3 });
    expect((await callRoute(apiRoutes.getSubmission, { params: { id: "999999" } })).status).toBe(404);
    expect((await callRoute(apiRoutes.getSubmission, { params: { id: "abc" } })).status).toBe(422);
    expect((await callRoute(apiRoutes.getSubmission, { params: { id: "3000000000" } })).status).toBe(422);
    expect((await callRoute(apiRoutes.listBroodRecords, { query: { submission: "3000000000" } })).status).toBe(422);
  });

  it("filters and pages brood records and estimates", async () => {
    const broods = await callRoute(apiRoutes.listBroodRecords, { query: { site: "OAK", year: "2010", limit: "1" } });
    // The restored submission is current: its three broods, not those of the version it replaced.
    expect(broods.body).toMatchObject({ total: 2, limit: 1, offset: 0 });
    expect(broods.body.items).toHaveLength(1);
    const bySpecies = await callRoute(apiRoutes.listBroodRecords, { query: { species: "Ficedula hypoleuca", yearFrom: "2011", site: "OAK" } });
    expect(bySpecies.body.items.map((b: { femaleId: string }) => b.femaleId)).toEqual(["F-3"]);
    expect((await callRoute(apiRoutes.listBroodRecords, { query: { limit: "0" } })).status).toBe(422);
    expect((await callRoute(apiRoutes.listBroodRecords, { query: { year: "twenty-ten" } })).status).toBe(422);
    const estimates = await callRoute(apiRoutes.listEstimates, { query: { outcome: "recruitment", level: "within_year", site: ["OAK", "PIN"] } });
    expect(estimates.body.items.map((e: { siteCode: string; value: number }) => [e.siteCode, e.value])).toEqual([["OAK", -0.12], ["PIN", -0.21]]);
    expect((await callRoute(apiRoutes.listEstimates, { query: { level: "between_year" } })).body.total).toBe(0);
    expect((await callRoute(apiRoutes.listEstimates, { query: { outcome: "survival" } })).status).toBe(422);
  });

  it("saves analyses, refusing unknown moderators, a taken name and HKSJ on a common-effect model", async () => {
    const spec = { name: "Recruitment cost by warming", outcome: "recruitment", level: "within_year", term: "linear", model: { type: "common_effect" }, moderators: ["warming_rate"] };
    const created = await callRoute(apiRoutes.createAnalysis, { json: spec });
    expect(created.status).toBe(201);
    expect(created.body.specification).toMatchObject({ scale: "per_day", grain: "site", test: "z", confidenceLevel: 0.95, subsets: {} });
    ids.analysis = created.body.id;
    expect((await callRoute(apiRoutes.createAnalysis, { json: spec })).status).toBe(409);
    const unknown = await callRoute(apiRoutes.createAnalysis, { json: { ...spec, name: "other", moderators: ["canopy"] } });
    expect(unknown.status).toBe(422);
    expect(unknown.body.error.fieldErrors[0]).toMatchObject({ field: "moderators.0", value: "canopy" });
    const hksj = await callRoute(apiRoutes.createAnalysis, { json: { ...spec, name: "other", test: "hksj" } });
    expect(hksj.status).toBe(422);
    expect(hksj.body.error.fieldErrors[0].field).toBe("test");
    const empty = await callRoute(apiRoutes.createAnalysis, { json: { ...spec, name: "Between-year fledging", level: "between_year", outcome: "fledging_failure", moderators: [] } });
    ids.emptyAnalysis = empty.body.id;
    const list = await callRoute(apiRoutes.listAnalyses);
    expect(list.body.items.map((a: { name: string }) => a.name)).toEqual(["Between-year fledging", "Recruitment cost by warming"]);
    expect((await callRoute(apiRoutes.getAnalysis, { params: { id: String(ids.analysis) } })).body.runs).toEqual([]);
    expect((await callRoute(apiRoutes.getAnalysis, { params: { id: "424242" } })).status).toBe(404);
  });

  it("runs an analysis and stores the fit with its data fingerprint; nothing to pool is 422 with the reason", async () => {
    const run = await callRoute(apiRoutes.runAnalysis, { params: { id: String(ids.analysis) } });
    expect(run.status).toBe(201);
    ids.run = run.body.id;
    expect(run.body).toMatchObject({ analysisId: ids.analysis, dataChanged: false, engineVersion: expect.stringMatching(/^\d+\.\d+\.\d+/) });
    expect(run.body.dataFingerprint).toMatch(/^[0-9a-f]{64}$/);
    const fit = run.body.result.fit as { coefficients: { term: string }[] };
    expect(fit.coefficients.map((c) => c.term)).toEqual(["intercept", "warming_rate"]);
    const nothing = await callRoute(apiRoutes.runAnalysis, { params: { id: String(ids.emptyAnalysis) } });
    expect(nothing.status).toBe(422);
    expect(nothing.body.error).toMatchObject({ code: "cannot_compute", message: expect.stringMatching(/no current estimates match/) });
    expect((await callRoute(apiRoutes.runAnalysis, { params: { id: "424242" } })).status).toBe(404);
  });

  it("shows a run and says when the data changed since", async () => {
    const run = await callRoute(apiRoutes.getAnalysisRun, { params: { id: String(ids.analysis), runId: String(ids.run) } });
    expect(run.body).toMatchObject({ id: ids.run, dataChanged: false });
    await callRoute(apiRoutes.createSubmission, { json: { siteCode: "BIR", kind: "estimates", rows: [siteEstimate(-0.05, 0.025)] } });
    const later = await callRoute(apiRoutes.getAnalysisRun, { params: { id: String(ids.analysis), runId: String(ids.run) } });
    expect(later.body.dataChanged).toBe(true);
    expect(later.body.currentDataFingerprint).not.toBe(later.body.dataFingerprint);
    expect((await callRoute(apiRoutes.getAnalysisRun, { params: { id: String(ids.emptyAnalysis), runId: String(ids.run) } })).status).toBe(404);
  });

  it("exports estimates as CSV with formulas neutralised and numbers left numeric, and as JSON", async () => {
    const csv = await callRoute(apiRoutes.exportEstimates, { query: { site: "OAK" } });
    expect(csv.contentType).toMatch(/^text\/csv/);
    const parsed = Papa.parse<Record<string, string>>(csv.text.trim(), { header: true });
    expect(parsed.errors).toEqual([]);
    expect(parsed.data[0]!.method).toBe("'=HYPERLINK(\"http://example.org\")");
    expect(parsed.data[0]!.value).toBe("-0.12");
    expect(csv.text).toContain(",-0.12,0.04,");
    const json = await callRoute(apiRoutes.exportEstimates, { query: { site: "OAK", format: "json" } });
    expect(json.body[0].method).toBe("=HYPERLINK(\"http://example.org\")");
    expect((await callRoute(apiRoutes.exportEstimates, { query: { format: "xlsx" } })).status).toBe(422);
  });

  it("exports brood records as CSV and JSON", async () => {
    const csv = await callRoute(apiRoutes.exportBroodRecords, { query: { site: "OAK" } });
    const rows = Papa.parse<Record<string, string>>(csv.text.trim(), { header: true }).data;
    expect(rows.map((r) => r.femaleId)).toEqual(["'-F2", "F-1", "F-3"]);
    const json = await callRoute(apiRoutes.exportBroodRecords, { query: { site: "OAK", format: "json" } });
    expect(json.body.map((b: { femaleId: string }) => b.femaleId)).toEqual(["-F2", "F-1", "F-3"]);
    expect((await callRoute(apiRoutes.exportBroodRecords, { query: { yearTo: "1800" } })).status).toBe(422);
  });

  it("exports a run's coefficients and studies as CSV, and the run as JSON", async () => {
    const coefficients = await callRoute(apiRoutes.exportAnalysisRun, { params: { runId: String(ids.run) } });
    const rows = Papa.parse<Record<string, string>>(coefficients.text.trim(), { header: true, dynamicTyping: true }).data;
    expect(rows.map((r) => r.term)).toEqual(["intercept", "warming_rate"]);
    expect(typeof rows[0]!.estimate).toBe("number");
    const studies = await callRoute(apiRoutes.exportAnalysisRun, { params: { runId: String(ids.run) }, query: { table: "studies" } });
    expect(Papa.parse<Record<string, string>>(studies.text.trim(), { header: true }).data.map((r) => r.siteCode)).toEqual(["ASH", "BIR", "OAK", "PIN"]);
    const json = await callRoute(apiRoutes.exportAnalysisRun, { params: { runId: String(ids.run) }, query: { format: "json" } });
    expect(json.body.id).toBe(ids.run);
    expect((await callRoute(apiRoutes.exportAnalysisRun, { params: { runId: "777777" } })).status).toBe(404);
  });

  it("exports the whole network as a zipped data package", async () => {
    const reply = await callRoute(apiRoutes.exportDataPackage);
    expect(reply.contentType).toBe("application/zip");
    const entries = unzipSync(reply.bytes);
    const descriptor = JSON.parse(strFromU8(entries["datapackage.json"]!));
    expect(descriptor.resources.map((r: { name: string }) => r.name)).toContain("brood-records");
    expect(strFromU8(entries["data/sites.csv"]!).split("\r\n")[0]).toMatch(/^code,name,species,latitude/);
  });

  it("changes a site's metadata, refusing an empty edit, years out of order (422) and an unknown site (404)", async () => {
    const edited = await callRoute(apiRoutes.updateSite, { params: { code: "ASH" }, json: { habitat: "ash-hazel coppice", elevationM: 85 } });
    expect(edited.status).toBe(200);
    expect(edited.body).toMatchObject({ code: "ASH", habitat: "ash-hazel coppice", elevationM: 85, firstYear: 2000 });
    expect((await callRoute(apiRoutes.getSite, { params: { code: "ASH" } })).body).toMatchObject({ site: { habitat: "ash-hazel coppice" }, estimatesWithheld: null });
    const cleared = await callRoute(apiRoutes.updateSite, { params: { code: "ASH" }, json: { habitat: "" } });
    expect(cleared.body.habitat).toBeNull();
    const empty = await callRoute(apiRoutes.updateSite, { params: { code: "ASH" }, json: {} });
    expect(empty.status).toBe(422);
    const years = await callRoute(apiRoutes.updateSite, { params: { code: "ASH" }, json: { lastYear: 1990 } });
    expect(years.status).toBe(422);
    expect(years.body.error.fieldErrors[0].field).toBe("lastYear");
    expect((await callRoute(apiRoutes.updateSite, { params: { code: "ELM" }, json: { habitat: "x" } })).status).toBe(404);
  });

  it("withdraws a submission, making the previous version current again; a second withdrawal is 409", async () => {
    const replaced = await callRoute(apiRoutes.listSubmissions, { query: { site: "PIN", kind: "estimates", status: "accepted" } });
    const previousId = replaced.body.items[0].id;
    const newer = await callRoute(apiRoutes.createSubmission, { json: { siteCode: "PIN", kind: "estimates", fileName: "pin-v2.json", rows: [siteEstimate(-0.3, 0.05)] } });
    expect(newer.body.supersededId).toBe(previousId);
    const withdrawn = await callRoute(apiRoutes.withdrawSubmission, { params: { id: String(newer.body.submission.id) } });
    expect(withdrawn.status).toBe(200);
    expect(withdrawn.body).toMatchObject({ submission: { id: newer.body.submission.id, status: "withdrawn" }, reinstatedId: previousId, recomputeJobId: null });
    const current = await callRoute(apiRoutes.listEstimates, { query: { site: "PIN" } });
    expect(current.body.items.map((e: { value: number }) => e.value)).toEqual([-0.21]);
    expect((await callRoute(apiRoutes.getSubmission, { params: { id: String(previousId) } })).body).toMatchObject({ status: "accepted", supersededById: null });
    expect((await callRoute(apiRoutes.withdrawSubmission, { params: { id: String(newer.body.submission.id) } })).status).toBe(409);
    expect((await callRoute(apiRoutes.withdrawSubmission, { params: { id: "999999" } })).status).toBe(404);
    expect((await callRoute(apiRoutes.withdrawSubmission, { params: { id: "abc" } })).status).toBe(422);
    const listed = await callRoute(apiRoutes.listSubmissions, { query: { status: "withdrawn" } });
    expect(listed.body.items.map((s: { fileName: string }) => s.fileName)).toEqual(["pin-v2.json"]);
    // The next upload supersedes the reinstated version.
    const next = await callRoute(apiRoutes.createSubmission, { json: { siteCode: "PIN", kind: "estimates", fileName: "pin-v3.json", rows: [siteEstimate(-0.2, 0.05)] } });
    expect(next.body).toMatchObject({ supersededId: previousId, unchanged: false });
  });

  it("exports the audit trail as CSV and JSON: who did what, with the SHA-256 of each submission", async () => {
    const csv = await callRoute(apiRoutes.exportAudit, { query: { entityType: "Site" } });
    expect(csv.contentType).toMatch(/^text\/csv/);
    const rows = Papa.parse<Record<string, string>>(csv.text.trim(), { header: true }).data;
    expect(rows.filter((r) => r.action === "site.create").map((r) => r.entityId).sort()).toEqual(["ASH", "BIR", "OAK", "PIN"]);
    expect(rows.every((r) => r.actor === "Contract Coordinator <contract-coordinator@example.org>")).toBe(true);
    const json = await callRoute(apiRoutes.exportAudit, { query: { format: "json", action: "submission.withdraw" } });
    expect(json.body).toHaveLength(1);
    expect(json.body[0]).toMatchObject({ entityType: "submission", sha256: expect.stringMatching(/^[0-9a-f]{64}$/), after: { status: "withdrawn", siteCode: "PIN" } });
    expect((await callRoute(apiRoutes.exportAudit, { query: { since: "not a date" } })).status).toBe(422);
  });

  it("called every route with success, and every route that takes input with bad input", () => {
    for (const route of API_ROUTES) {
      const statuses = calls.filter((c) => c.route === route).map((c) => c.status);
      expect(statuses.some((s) => s < 300), `${route.method} ${route.path} succeeded`).toBe(true);
      if (route.params || route.query || route.body) expect(statuses.some((s) => s >= 400 && s < 500), `${route.method} ${route.path} refused bad input`).toBe(true);
      expect(statuses.filter((s) => s >= 500), `${route.method} ${route.path} never 500`).toEqual([]);
    }
  });
});
