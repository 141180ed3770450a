import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Actor } from "@/lib/auth/actor";
import { uploadSourceFromBytes } from "@/lib/ingest/upload-source";
import { JOB_HANDLERS } from "@/lib/jobs/job-handlers";
import { cancelJob, getJob } from "@/lib/jobs/job-queue";
import { runNextJob, type JobContext } from "@/lib/jobs/job-runner";
import { enqueueSiteRecompute, RECOMPUTE_SITE_ESTIMATES } from "@/lib/jobs/recompute-site-estimates-job";
import { acceptUpload } from "@/lib/submissions/accept-upload";
import { createTestDatabase, testProviders, type TestDatabase } from "@/test/helpers/test-databases";

const providers = await testProviders();
const actor: Actor = { kind: "user", userId: null, role: "coordinator", label: "test", siteIds: [], via: "none" };

describe.each(providers)("recomputing a site's estimates after an upload on %s", (provider) => {
  let database: TestDatabase;
  beforeAll(async () => {
    database = await createTestDatabase(provider);
    const species = await database.db.species.create({ data: { scientificName: "Ficedula albicollis", commonName: "Collared flycatcher" } });
    await database.db.site.create({ data: { code: "BIR", name: "Birch", speciesId: species.id, latitude: 57, longitude: 18, firstYear: 2000, lastYear: 2020 } });
  });
  afterAll(async () => {
    await database.drop();
  });

  it("queues one job per site however many uploads wait, and runs it off the request, recording what it wrote", async () => {
    const lines = ["year,female,lay date,clutch,fledged,recruits"];
    for (let year = 2005; year <= 2010; year++) {
      for (let i = 0; i < 40; i++) {
        const clutch = 5 + (i % 5);
        const fledged = Math.max(0, clutch - (i % 4));
        lines.push(`${year},F-${year}-${i},${110 + ((i * 7) % 30)},${clutch},${fledged},${i % 3 === 0 ? 1 : 0}`);
      }
    }
    const years = ["year,food peak,spring temperature", ...Array.from({ length: 6 }, (_, k) => `${2005 + k},${130 + k},${7 + k * 0.2}`)];
    const broods = await acceptUpload(database.db, uploadSourceFromBytes("broods.csv", `${lines.join("\n")}\n`), { siteCode: "BIR", kind: "brood_records" }, actor);
    const covariates = await acceptUpload(database.db, uploadSourceFromBytes("years.csv", `${years.join("\n")}\n`), { siteCode: "BIR", kind: "site_year_covariates" }, actor);
    expect(broods.job).not.toBeNull();
    expect(covariates.job?.id).toBe(broods.job!.id);
    const site = await database.db.site.findUniqueOrThrow({ where: { code: "BIR" } });
    expect((await enqueueSiteRecompute(database.db, { siteId: site.id, submissionId: null })).id).toBe(broods.job!.id);

    const outcome = await runNextJob(database.db, JOB_HANDLERS);
    expect(outcome?.job.kind).toBe(RECOMPUTE_SITE_ESTIMATES);
    const job = await getJob(database.db, broods.job!.id);
    const computed = await database.db.estimate.count({ where: { siteId: site.id, source: "computed" } });
    expect(job.status).toBe("succeeded");
    expect(computed).toBeGreaterThan(0);
    expect(job.result).toMatchObject({ siteId: site.id, submissionId: broods.submissionId, estimatesWritten: computed });
    expect(job.message).toContain(`${computed} estimates computed from submission ${broods.submissionId}`);
    expect(job.progress).toBe(1);
  });

  it("reports the model it is fitting, and once cancelled writes nothing", async () => {
    const site = await database.db.site.findUniqueOrThrow({ where: { code: "BIR" } });
    const before = await database.db.estimate.findMany({ where: { siteId: site.id }, orderBy: { id: "asc" } });
    const queued = await enqueueSiteRecompute(database.db, { siteId: site.id, submissionId: null });
    const messages: string[] = [];
    // Cancel at the first report (reading the data): the next report stops the job.
    const handlers = {
      ...JOB_HANDLERS,
      [RECOMPUTE_SITE_ESTIMATES]: (context: JobContext) =>
        JOB_HANDLERS[RECOMPUTE_SITE_ESTIMATES]!({
          ...context,
          progress: async (fraction, message) => {
            messages.push(message ?? "");
            if (messages.length === 1) await cancelJob(database.db, queued.id);
            await context.progress(fraction, message);
          },
        }),
    };
    const outcome = await runNextJob(database.db, handlers);
    expect(outcome?.status).toBe("cancelled");
    expect(messages[0]).toMatch(/^reading the brood records of submission \d+$/);
    expect((await getJob(database.db, queued.id)).status).toBe("cancelled");
    expect(await database.db.estimate.findMany({ where: { siteId: site.id }, orderBy: { id: "asc" } })).toEqual(before);
  });
});
