/**
 * npm run loadtest [-- --seconds 60] [--clients 50] [--database sqlite|postgresql|both] [--seed 9]
 *
 * For each database: loads the demo network into a throwaway database, starts the production
 * build (run `next build` first; the npm script does) on 127.0.0.1, drives it with `clients`
 * concurrent clients for `seconds` (uploads, pages, API lists, analysis runs: see load-clients.ts),
 * stops it, prints throughput and latency percentiles per kind of request, then checks from the
 * database that every acknowledged upload is stored exactly once as sent and that no request got
 * a 5xx or no reply. PostgreSQL runs when a server answers at PHENOPOOL_TEST_PG_URL (default
 * postgresql://postgres@127.0.0.1:5432/postgres; required under CI=true); its database is dropped.
 * Exit code 1 when a check failed.
 */
import { createDb } from "@/lib/db/client";
import type { DatabaseProvider } from "@/lib/db/provider";
import { startServer } from "@/test/e2e/harness";
import { postgresAvailable } from "@/test/helpers/test-databases";
import { formatSummary, summarise } from "./latency-summary";
import { runLoad } from "./load-clients";
import { prepareLoadNetwork } from "./load-network";
import { verifyUploads } from "./verify-uploads";

interface Arguments {
  seconds: number;
  clients: number;
  databases: DatabaseProvider[];
  seed: number;
}

function parseArguments(argv: readonly string[]): Arguments {
  const args: Arguments = { seconds: 60, clients: 50, databases: ["sqlite", "postgresql"], seed: 9 };
  for (let i = 0; i < argv.length; i += 2) {
    const [name, value] = [argv[i], argv[i + 1]];
    const whole = (max: number) => {
      const n = Number(value);
      if (!Number.isInteger(n) || n < 1 || n > max) throw new Error(`${name} takes a whole number from 1 to ${max}, not '${value ?? ""}'`);
      return n;
    };
    if (name === "--seconds") args.seconds = whole(600);
    else if (name === "--clients") args.clients = whole(200);
    else if (name === "--seed") args.seed = whole(2 ** 31);
    else if (name === "--database") {
      if (value === "both") args.databases = ["sqlite", "postgresql"];
      else if (value === "sqlite" || value === "postgresql") args.databases = [value];
      else throw new Error(`--database takes sqlite, postgresql or both, not '${value ?? ""}'`);
    } else throw new Error(`unknown option '${name}'; options: --seconds N, --clients N, --database sqlite|postgresql|both, --seed N`);
  }
  return args;
}

async function loadTest(provider: DatabaseProvider, args: Arguments): Promise<boolean> {
  const setupStarted = performance.now();
  const network = await prepareLoadNetwork(provider);
  let failed = false;
  try {
    const server = await startServer({ databaseUrl: network.databaseUrl });
    process.stdout.write(`\n${provider}: demo network loaded and server started in ${((performance.now() - setupStarted) / 1000).toFixed(1)} s; ${args.clients} clients for ${args.seconds} s\n`);
    let run;
    try {
      run = await runLoad({ baseUrl: server.baseUrl, network, clients: args.clients, durationMs: args.seconds * 1000, seed: args.seed, requestTimeoutMs: 120_000 });
    } finally {
      await server.kill("SIGTERM");
    }
    process.stdout.write(`${formatSummary(summarise(run.samples, run.elapsedMs))}\n(${(run.elapsedMs / 1000).toFixed(1)} s including the requests in flight at the deadline)\n`);
    const broken = run.samples.filter((s) => s.status === null || s.status >= 500 || (s.status >= 300 && s.status < 400));
    // Refusals the application owes its clients here: an upload that lost a race to its site's
    // current submission (409), and an analysis run while uploads have left too few sites with
    // current estimates (422 cannot_compute; a site's computed estimates are current again once its
    // recomputation has run). Any other 4xx is a failure.
    const expected = (s: (typeof run.samples)[number]) =>
      (s.kind.startsWith("upload") && s.status === 409) || (s.kind === "analysis run" && s.status === 422 && /"code":"cannot_compute"/.test(s.detail ?? ""));
    const refusedOther = run.samples.filter((s) => s.status !== null && s.status >= 400 && s.status < 500 && !expected(s));
    const cannotCompute = run.samples.filter((s) => s.kind === "analysis run" && s.status === 422).length;
    if (cannotCompute) process.stdout.write(`  ${cannotCompute} analysis runs refused with 422 cannot_compute (too few sites with current estimates while recomputations were queued)\n`);
    for (const s of [...broken, ...refusedOther].slice(0, 10)) process.stdout.write(`  FAILED ${s.kind}: ${s.status ?? "no reply"} ${s.detail ?? ""}\n`);
    if (broken.length || refusedOther.length) {
      failed = true;
      process.stdout.write(`  ${broken.length} requests got a 5xx, a redirect or no reply; ${refusedOther.length} were refused unexpectedly\n`);
      if (broken.some((s) => s.status !== null && s.status >= 500)) process.stdout.write(`  server output (end):\n${server.output().slice(-4000)}\n`);
    }
    const retried = run.uploads.filter((u) => u.statuses.length > 1).length;
    const conflicts = run.uploads.filter((u) => !u.acknowledged && u.statuses.every((s) => s === 409)).length;
    const db = createDb(network.databaseUrl);
    try {
      const jobs = await db.job.groupBy({ by: ["status"], _count: { _all: true } });
      process.stdout.write(`  background jobs at the end: ${jobs.map((j) => `${j._count._all} ${j.status}`).join(", ") || "none"}\n`);
      const failedJobs = await db.job.findMany({ where: { status: "failed" }, select: { kind: true, message: true }, take: 5 });
      for (const job of failedJobs) process.stdout.write(`  FAILED job ${job.kind}: ${job.message ?? ""}\n`);
      if (failedJobs.length) failed = true;
      const check = await verifyUploads(db, provider, run.uploads);
      process.stdout.write(
        `  uploads: ${check.acknowledged} acknowledged, each stored exactly once with the SHA-256, row count and rows sent (${check.rowsCompared} rows compared); ` +
          `${retried} sent again after a 409 (another upload to the site came first); ${check.refused} never acknowledged (${conflicts} refused with 409 three times), none of them stored\n`,
      );
      for (const problem of check.problems.slice(0, 20)) process.stdout.write(`  FAILED ${problem}\n`);
      if (check.problems.length) {
        failed = true;
        process.stdout.write(`  ${check.problems.length} problems found in the database\n`);
      } else {
        process.stdout.write(`  database consistent: ${provider === "sqlite" ? "integrity_check ok, no orphan rows" : "no orphan rows"}, every submission whole\n`);
      }
    } finally {
      await db.$disconnect();
    }
  } finally {
    await network.drop();
  }
  return !failed;
}

async function main(): Promise<number> {
  const args = parseArguments(process.argv.slice(2));
  let ok = true;
  for (const provider of args.databases) {
    if (provider === "postgresql" && !(await postgresAvailable())) {
      process.stdout.write("\npostgresql: no server at PHENOPOOL_TEST_PG_URL (default 127.0.0.1:5432); skipped (under CI=true this is a failure)\n");
      continue;
    }
    ok = (await loadTest(provider, args)) && ok;
  }
  process.stdout.write(ok ? "\nload test passed\n" : "\nload test FAILED\n");
  return ok ? 0 : 1;
}

main().then(
  (code) => process.exit(code),
  (error: unknown) => {
    process.stderr.write(`loadtest: ${(error as Error).stack ?? String(error)}\n`);
    process.exit(1);
  },
);
