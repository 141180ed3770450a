import type { Db } from "@/lib/db/client";
import type { DatabaseProvider } from "@/lib/db/provider";

/**
 * The consistency checks run after a load, a crash or a refused write. Returns one line per
 * problem (none: consistent):
 * - SQLite's own checks: PRAGMA integrity_check is "ok" and PRAGMA foreign_key_check finds no row
 *   whose parent is missing. On PostgreSQL every foreign key is checked with a join.
 * - every submission is whole: it holds exactly `rowCount` rows of its kind;
 * - no site has more than one current (accepted) submission of a kind.
 */
export async function databaseProblems(db: Db, provider: DatabaseProvider): Promise<string[]> {
  const problems: string[] = [];
  if (provider === "sqlite") {
    const integrity = (await db.$queryRawUnsafe(`PRAGMA integrity_check`)) as { integrity_check: string }[];
    const verdict = integrity.map((r) => r.integrity_check).join("; ");
    if (verdict !== "ok") problems.push(`PRAGMA integrity_check: ${verdict}`);
    const orphans = (await db.$queryRawUnsafe(`PRAGMA foreign_key_check`)) as { table: string; parent: string }[];
    for (const o of orphans.slice(0, 10)) problems.push(`orphan row in ${o.table}: its ${o.parent} is missing`);
    if (orphans.length > 10) problems.push(`... ${orphans.length} orphan rows in all`);
  } else {
    const keys = (await db.$queryRawUnsafe(`
      SELECT tc.table_name AS child, kcu.column_name AS "childColumn", ccu.table_name AS parent, ccu.column_name AS "parentColumn"
      FROM information_schema.table_constraints tc
      JOIN information_schema.key_column_usage kcu ON kcu.constraint_name = tc.constraint_name AND kcu.table_schema = tc.table_schema
      JOIN information_schema.constraint_column_usage ccu ON ccu.constraint_name = tc.constraint_name AND ccu.table_schema = tc.table_schema
      WHERE tc.constraint_type = 'FOREIGN KEY' AND tc.table_schema = current_schema()`)) as { child: string; childColumn: string; parent: string; parentColumn: string }[];
    if (keys.length === 0) problems.push("no foreign keys found to check");
    for (const k of keys) {
      const [row] = (await db.$queryRawUnsafe(
        `SELECT COUNT(*)::int AS n FROM "${k.child}" c LEFT JOIN "${k.parent}" p ON p."${k.parentColumn}" = c."${k.childColumn}" WHERE c."${k.childColumn}" IS NOT NULL AND p."${k.parentColumn}" IS NULL`,
      )) as { n: number }[];
      if (row && Number(row.n) > 0) problems.push(`${row.n} orphan rows in ${k.child}: their ${k.childColumn} names no ${k.parent}`);
    }
  }
  const counts = (await db.$queryRawUnsafe(`
    SELECT s."id" AS id, s."kind" AS kind, s."rowCount" AS "rowCount",
      CASE s."kind"
        WHEN 'brood_records' THEN (SELECT COUNT(*) FROM "BroodRecord" b WHERE b."submissionId" = s."id")
        WHEN 'site_year_covariates' THEN (SELECT COUNT(*) FROM "SiteYear" y WHERE y."submissionId" = s."id")
        ELSE (SELECT COUNT(*) FROM "Estimate" e WHERE e."submissionId" = s."id" AND e."source" = 'uploaded')
      END AS stored
    FROM "Submission" s`)) as { id: number; kind: string; rowCount: number | bigint; stored: number | bigint }[];
  for (const c of counts) {
    if (Number(c.stored) !== Number(c.rowCount)) problems.push(`submission ${c.id} (${c.kind}) says ${c.rowCount} rows but holds ${c.stored}`);
  }
  const current = (await db.$queryRawUnsafe(
    `SELECT "siteId" AS site, "kind" AS kind, COUNT(*) AS n FROM "Submission" WHERE "status" = 'accepted' GROUP BY "siteId", "kind" HAVING COUNT(*) > 1`,
  )) as { site: number; kind: string; n: number | bigint }[];
  for (const c of current) problems.push(`site ${c.site} has ${c.n} current ${c.kind} submissions`);
  return problems;
}

/** Every row of every table, ids and timestamps included, in a stable order: equal snapshots, equal data. */
export async function tableSnapshot(db: Db, provider: DatabaseProvider): Promise<Record<string, unknown[]>> {
  const tables =
    provider === "sqlite"
      ? ((await db.$queryRawUnsafe(`SELECT name FROM sqlite_master WHERE type = 'table' AND name NOT LIKE 'sqlite_%' ORDER BY name`)) as { name: string }[])
      : ((await db.$queryRawUnsafe(`SELECT tablename AS name FROM pg_tables WHERE schemaname = 'public' ORDER BY tablename`)) as { name: string }[]);
  const out: Record<string, unknown[]> = {};
  for (const { name } of tables) out[name] = (await db.$queryRawUnsafe(`SELECT * FROM "${name}" ORDER BY 1`)) as unknown[];
  return out;
}
