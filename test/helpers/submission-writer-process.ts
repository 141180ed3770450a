/**
 * A separate process that keeps writing: `node --import tsx test/helpers/submission-writer-process.ts URL SITE`
 * writes brood-record submissions of 20 rows to SITE, one after another through the one write
 * path (writeSubmission), printing "wrote N" after each, until its standard input closes. Tests
 * use it to have another process write while they take a backup or check a database.
 */
import { createHash } from "node:crypto";
import { createDb } from "@/lib/db/client";
import { writeSubmission } from "@/lib/submissions/write-submission";

const [url, siteCode] = process.argv.slice(2);
if (!url || !siteCode) throw new Error("usage: submission-writer-process.ts DATABASE_URL SITE_CODE");
const db = createDb(url);
let open = true;
process.stdin.on("end", () => (open = false));
process.stdin.on("close", () => (open = false));
process.stdin.resume();

for (let n = 1; open; n++) {
  const rows = Array.from({ length: 20 }, (_, i) => ({ year: 2001 + (i % 3), femaleId: `W${n}-${i}`, layDateDoy: 100 + (i % 30), clutchSize: 8, hatchDateDoy: null, fledglings: 4, recruits: i % 2 }));
  const sha256 = createHash("sha256").update(`writer ${process.pid} ${n}`).digest("hex");
  await writeSubmission(db, { siteCode, kind: "brood_records", fileName: `writer-${n}.csv`, sha256, rows });
  process.stdout.write(`wrote ${n}\n`);
  // SQLite's client answers without I/O: give way so the end of standard input is noticed.
  await new Promise((resolve) => setImmediate(resolve));
}
await db.$disconnect();
