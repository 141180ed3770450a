// Generates the two Prisma clients (SQLite and PostgreSQL) from the one schema.prisma.
// `prisma generate` never calls the schema engine, but the CLI tries to download it first,
// and this network cannot reach the download host; a stub executable stops the download.
// A caller's own PRISMA_SCHEMA_ENGINE_BINARY wins.
import { execFileSync } from "node:child_process";
import { chmodSync, mkdirSync, readFileSync, writeFileSync, mkdtempSync } from "node:fs";
import { tmpdir } from "node:os";
import { dirname, join } from "node:path";
import { fileURLToPath } from "node:url";

const prismaDir = dirname(fileURLToPath(import.meta.url));
const root = dirname(prismaDir);
const schemaPath = join(prismaDir, "schema.prisma");
const source = readFileSync(schemaPath, "utf8");

const providerLine = 'provider = "sqlite"';
const outputLine = 'output       = "../lib/db/generated/sqlite"';
if (!source.includes(providerLine) || !source.includes(outputLine)) {
  throw new Error(`prisma/schema.prisma must contain the lines '${providerLine}' and '${outputLine}'`);
}
// The PostgreSQL schema is derived, never edited: it lives beside the generated client.
const pgDir = join(root, "lib/db/generated");
mkdirSync(pgDir, { recursive: true });
const pgSchemaPath = join(pgDir, "postgresql.prisma");
writeFileSync(
  pgSchemaPath,
  "// Derived from prisma/schema.prisma by prisma/generate.mjs. Do not edit.\n" +
    source
      .replace(providerLine, 'provider = "postgresql"')
      .replace(outputLine, 'output       = "./postgresql"'),
);

const env = { ...process.env };
if (!env.PRISMA_SCHEMA_ENGINE_BINARY) {
  const stub = join(mkdtempSync(join(tmpdir(), "phenopool-prisma-")), "schema-engine-stub");
  writeFileSync(stub, "#!/bin/sh\nexit 1\n");
  chmodSync(stub, 0o755);
  env.PRISMA_SCHEMA_ENGINE_BINARY = stub;
}
env.PRISMA_HIDE_UPDATE_MESSAGE = "1";

const prismaBin = join(root, "node_modules/prisma/build/index.js");
for (const schema of [schemaPath, pgSchemaPath]) {
  execFileSync(process.execPath, [prismaBin, "generate", "--schema", schema], { env, stdio: ["ignore", "ignore", "inherit"] });
}
