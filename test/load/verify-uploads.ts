import type { Db } from "@/lib/db/client";
import type { DatabaseProvider } from "@/lib/db/provider";
import { databaseProblems } from "@/test/helpers/database-consistency";
import type { SentUpload } from "./load-clients";
import { LOAD_FILE_PREFIX, rowsDigest } from "./upload-files";

/**
 * What the database holds after the load, compared with what the clients sent and were told:
 * every acknowledged upload is there exactly once, with the clients' SHA-256, row count and rows;
 * no refused upload left anything behind; and the database passes databaseProblems' checks
 * (integrity, no orphan rows, every submission whole, one current submission per site and kind).
 */
export interface UploadCheck {
  acknowledged: number;
  refused: number;
  rowsCompared: number;
  problems: string[];
}

export async function verifyUploads(db: Db, provider: DatabaseProvider, uploads: readonly SentUpload[]): Promise<UploadCheck> {
  const problems: string[] = [];
  let rowsCompared = 0;
  const stored = await db.submission.findMany({
    where: { fileName: { startsWith: LOAD_FILE_PREFIX } },
    select: { id: true, sha256: true, rowCount: true, fileName: true, site: { select: { code: true } } },
  });
  const bySha = new Map<string, typeof stored>();
  for (const s of stored) bySha.set(s.sha256, [...(bySha.get(s.sha256) ?? []), s]);

  let acknowledged = 0;
  for (const upload of uploads) {
    const found = bySha.get(upload.file.sha256) ?? [];
    if (!upload.acknowledged) {
      if (found.length) problems.push(`${upload.file.fileName}: refused (${upload.statuses.map((s) => s ?? "no reply").join(", ")}) but stored as submission ${found.map((f) => f.id).join(", ")}`);
      continue;
    }
    acknowledged += 1;
    const { submissionId, sha256, rowCount } = upload.acknowledged;
    if (sha256 !== upload.file.sha256) problems.push(`${upload.file.fileName}: the reply's SHA-256 ${sha256} is not the one sent ${upload.file.sha256}`);
    if (rowCount !== upload.file.rowCount) problems.push(`${upload.file.fileName}: the reply counts ${rowCount} rows, ${upload.file.rowCount} were sent`);
    if (found.length !== 1) {
      problems.push(`${upload.file.fileName}: acknowledged as submission ${submissionId} but stored ${found.length} times`);
      continue;
    }
    const submission = found[0]!;
    if (submission.id !== submissionId) problems.push(`${upload.file.fileName}: acknowledged as ${submissionId}, stored as ${submission.id}`);
    if (submission.site.code !== upload.siteCode) problems.push(`${upload.file.fileName}: sent to ${upload.siteCode}, stored for ${submission.site.code}`);
    if (submission.rowCount !== upload.file.rowCount) problems.push(`${upload.file.fileName}: stored row count ${submission.rowCount}, sent ${upload.file.rowCount}`);
    const rows = await db.broodRecord.findMany({
      where: { submissionId: submission.id },
      select: { year: true, femaleId: true, layDateDoy: true, clutchSize: true, hatchDateDoy: true, fledglings: true, recruits: true },
    });
    rowsCompared += rows.length;
    if (rows.length !== upload.file.rowCount) problems.push(`${upload.file.fileName}: ${rows.length} brood records stored, ${upload.file.rowCount} sent`);
    else if (rowsDigest(rows) !== upload.file.rowsDigest) problems.push(`${upload.file.fileName}: the stored brood records differ from those sent`);
  }
  const sentShas = new Set(uploads.map((u) => u.file.sha256));
  for (const s of stored) if (!sentShas.has(s.sha256)) problems.push(`submission ${s.id} (${s.fileName}) was stored but never sent`);

  problems.push(...(await databaseProblems(db, provider)));
  return { acknowledged, refused: uploads.length - acknowledged, rowsCompared, problems };
}
