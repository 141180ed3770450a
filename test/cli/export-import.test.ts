import { mkdtempSync, readFileSync, readdirSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { runCli } from "@/lib/cli/run-cli";
import { getDb } from "@/lib/db/client";
import { networkChecksum } from "@/lib/db/network-checksum";
import { writeSubmission } from "@/lib/submissions/write-submission";
import { createTestDatabase, type TestDatabase } from "@/test/helpers/test-databases";

/** `export --out` and `import-package` from the command line, on the DATABASE_URL database (SQLite). */
async function cli(args: string[]) {
  let stdout = "";
  let stderr = "";
  const code = await runCli(args, { stdout: (t) => (stdout += t), stderr: (t) => (stderr += t) });
  return { code, stdout, stderr };
}

describe("export and import-package commands", () => {
  let source: TestDatabase;
  let target: TestDatabase;
  const folder = mkdtempSync(join(tmpdir(), "phenopool-export-"));

  beforeAll(async () => {
    source = await createTestDatabase("sqlite");
    target = await createTestDatabase("sqlite");
    const species = await source.db.species.create({ data: { scientificName: "Cyanistes caeruleus", commonName: "Blue tit" } });
    await source.db.site.create({ data: { code: "ASH", name: "Ash Hollow", speciesId: species.id, latitude: 51.5, longitude: -1.3, firstYear: 1990, lastYear: 2000 } });
    await writeSubmission(source.db, { siteCode: "ASH", kind: "brood_records", fileName: "b.csv", sha256: "9".repeat(64), rows: [{ year: 1995, femaleId: "K1", layDateDoy: 110, clutchSize: 9, hatchDateDoy: null, fledglings: 8, recruits: 2 }] });
  });
  afterAll(async () => {
    await getDb().$disconnect();
    await source.drop();
    await target.drop();
    rmSync(folder, { recursive: true, force: true });
  });

  it("writes a folder and a zip, and restores the network from either into an empty database", async () => {
    process.env.DATABASE_URL = source.url;
    const written = await cli(["export", "--out", join(folder, "package")]);
    expect(written).toMatchObject({ code: 0, stderr: "" });
    expect(written.stdout).toMatch(/brood-records 1/);
    expect(readdirSync(join(folder, "package")).sort()).toEqual(["data", "datapackage.json"]);
    expect(JSON.parse(readFileSync(join(folder, "package", "datapackage.json"), "utf8")).resources).toHaveLength(13);
    expect((await cli(["export", "--out", join(folder, "network.zip")])).code).toBe(0);

    process.env.DATABASE_URL = target.url;
    const restored = await cli(["import-package", join(folder, "network.zip")]);
    expect(restored).toMatchObject({ code: 0, stderr: "" });
    expect((await networkChecksum(target.db)).sha256).toBe((await networkChecksum(source.db)).sha256);
    const twice = await cli(["import-package", join(folder, "package")]);
    expect(twice.code).toBe(2);
    expect(twice.stderr).toMatch(/the network is not empty/);
  });

  it("refuses to write into a folder that holds files, and says which option is missing", async () => {
    process.env.DATABASE_URL = source.url;
    const occupied = await cli(["export", "--out", join(folder, "package")]);
    expect(occupied.code).toBe(2);
    expect(occupied.stderr).toMatch(/is not an empty folder/);
    expect((await cli(["export"])).stderr).toMatch(/export --out PATH/);
    expect((await cli(["import-package", join(folder, "nothing-here")])).stderr).toMatch(/does not exist/);
  });
});
