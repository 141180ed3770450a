import { execFile } from "node:child_process";
import { promisify } from "node:util";
import { afterAll, describe, expect, it } from "vitest";
import { AppError } from "@/lib/errors/app-error";
import { parseSeedArguments } from "@/seed/arguments";
import { runSeed } from "@/seed/run-seed";
import { DEFAULT_DEMO_SEED } from "@/seed/simulate";
import { createEmptyDatabase } from "@/test/helpers/test-databases";

const run = promisify(execFile);
const cleanups: Array<() => Promise<void>> = [];
afterAll(async () => {
  while (cleanups.length) await cleanups.pop()!();
});

describe("npm run seed options", () => {
  it("default to the fixed demo seed, no force, the truth in data/", () => {
    expect(parseSeedArguments([])).toEqual({
      seed: DEFAULT_DEMO_SEED,
      force: false,
      ifEmpty: false,
      truthPath: "data/demo-truth.json",
      accountsPath: "data/demo-accounts.json",
      showAccounts: false,
      help: false,
    });
  });

  it("read --seed N, --seed=N, --force, --if-empty, --truth FILE", () => {
    expect(parseSeedArguments(["--seed", "7", "--force", "--truth", "/tmp/t.json"])).toMatchObject({ seed: 7, force: true, truthPath: "/tmp/t.json" });
    expect(parseSeedArguments(["--seed=0", "--if-empty"])).toMatchObject({ seed: 0, ifEmpty: true });
    expect(parseSeedArguments(["--accounts-file", "/tmp/a.json"])).toMatchObject({ accountsPath: "/tmp/a.json" });
  });

  it.each([
    [["--seed", "-3"], /--seed must be a whole number/],
    [["--seed", "1.5"], /--seed must be a whole number/],
    [["--seed", "9007199254740993"], /--seed must be a whole number/],
    [["--seed"], /--seed needs a value/],
    [["--truth", "--force"], /--truth needs a value/],
    [["--overwrite"], /unknown option '--overwrite'/],
  ])("refuse %j with a clear message", (argv, message) => {
    expect(() => parseSeedArguments(argv)).toThrow(AppError);
    expect(() => parseSeedArguments(argv)).toThrow(message);
  });
});

describe("the seed command on a database that holds sites", () => {
  it("exits non-zero and names --force; with --if-empty it leaves the data and exits 0", { timeout: 120_000 }, async () => {
    const { url, dropRaw } = await createEmptyDatabase("sqlite");
    cleanups.push(dropRaw);
    await runSeed({ databaseUrl: url, seed: 5, truthPath: null, accountsPath: null, siteCodes: ["ORL"] });
    const env = { ...process.env, DATABASE_URL: url };
    const refused = await run("npx", ["tsx", "seed/index.ts", "--truth", "/dev/null"], { env }).then(
      () => null,
      (error: { code: number; stderr: string }) => error,
    );
    expect(refused?.code).toBe(2);
    expect(refused?.stderr).toMatch(/already holds 1 site; nothing was loaded.*--force/);
    const skipped = await run("npx", ["tsx", "seed/index.ts", "--if-empty"], { env });
    expect(skipped.stdout).toMatch(/already holds 1 site; left as it is/);
  });
});
