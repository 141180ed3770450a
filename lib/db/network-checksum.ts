import { createHash } from "node:crypto";
import type { Db } from "./client";

/**
 * A SHA-256 over the content of every table, independent of the order rows were written in and
 * of the database engine: two databases holding the same network give the same checksum.
 *
 * Each row is rendered as a JSON array of its fields with foreign keys replaced by the referenced
 * row's natural key (site code, user email, species name, moderator key, analysis name; a
 * submission by site code, kind, its depth in its chain of superseded submissions and its SHA-256).
 * Left out: autoincrement ids, timestamps (they record when, not what), and password hashes (each
 * carries a random salt; whether an account has a password is kept). A table's rows are sorted as
 * strings, then hashed with the table name and row count; the checksum hashes the tables in name order.
 */

export interface TableChecksum {
  rows: number;
  sha256: string;
}

export interface NetworkChecksum {
  sha256: string;
  tables: Record<string, TableChecksum>;
}

type Cell = string | number | boolean | null;

interface Keys {
  siteCode: Map<number, string>;
  userEmail: Map<number, string>;
  submissionKey: Map<number, Cell[]>;
}

function required<K, V>(map: Map<K, V>, key: K, what: string): V {
  const value = map.get(key);
  if (value === undefined) throw new Error(`network checksum: ${what} ${String(key)} is referenced but missing`);
  return value;
}

const optional = <V>(map: Map<number, V>, key: number | null, what: string): V | null => (key === null ? null : required(map, key, what));

/** Every table with how its rows are rendered. A new model must be added here (a test checks). */
const TABLES: Record<string, (db: Db, keys: Keys) => Promise<Cell[][]>> = {
  User: async (db) =>
    (await db.user.findMany({ select: { email: true, displayName: true, role: true, passwordHash: true, active: true } })).map((u) => [
      u.email,
      u.displayName,
      u.role,
      u.passwordHash !== null,
      u.active,
    ]),
  Session: async (db, keys) =>
    (await db.session.findMany({ select: { userId: true, tokenHash: true } })).map((s) => [required(keys.userEmail, s.userId, "user"), s.tokenHash]),
  ApiToken: async (db, keys) =>
    (await db.apiToken.findMany({ select: { userId: true, name: true, tokenHash: true, prefix: true, revokedAt: true } })).map((t) => [
      required(keys.userEmail, t.userId, "user"),
      t.name,
      t.tokenHash,
      t.prefix,
      t.revokedAt !== null,
    ]),
  SignInAttempt: async (db) =>
    (await db.signInAttempt.findMany({ select: { email: true, address: true, succeeded: true } })).map((a) => [a.email, a.address, a.succeeded]),
  AuditEntry: async (db, keys) =>
    (
      await db.auditEntry.findMany({
        select: { actorUserId: true, actorLabel: true, action: true, entityType: true, entityId: true, summary: true, sha256: true },
      })
    ).map((a) => [optional(keys.userEmail, a.actorUserId, "user"), a.actorLabel, a.action, a.entityType, a.entityId, a.summary, a.sha256]),
  Species: async (db) => (await db.species.findMany({ select: { scientificName: true, commonName: true } })).map((s) => [s.scientificName, s.commonName]),
  Site: async (db, keys) =>
    (await db.site.findMany({ include: { species: { select: { scientificName: true } } } })).map((s) => [
      s.code,
      s.name,
      s.species.scientificName,
      s.latitude,
      s.longitude,
      s.elevationM,
      s.habitat,
      s.firstYear,
      s.lastYear,
      s.dateConvention,
      optional(keys.userEmail, s.leadUserId, "user"),
      s.notes,
    ]),
  Moderator: async (db) =>
    (await db.moderator.findMany()).map((m) => [m.key, m.label, m.unit, m.kind, m.description, m.builtIn]),
  ModeratorValue: async (db, keys) =>
    (await db.moderatorValue.findMany({ include: { moderator: { select: { key: true } } } })).map((v) => [
      v.moderator.key,
      required(keys.siteCode, v.siteId, "site"),
      v.numericValue,
      v.categoricalValue,
      v.standardError,
      v.source,
      v.method,
    ]),
  Submission: async (db, keys) =>
    (await db.submission.findMany({ select: { id: true, fileName: true, rowCount: true, submittedById: true, status: true } })).map((s) => [
      ...required(keys.submissionKey, s.id, "submission"),
      s.fileName,
      s.rowCount,
      optional(keys.userEmail, s.submittedById, "user"),
      s.status,
    ]),
  SiteYear: async (db, keys) =>
    (await db.siteYear.findMany()).map((y) => [
      required(keys.siteCode, y.siteId, "site"),
      ...required(keys.submissionKey, y.submissionId, "submission"),
      y.year,
      y.foodPeakDoy,
      y.foodPeakSe,
      y.meanSpringTempC,
      y.broodCount,
    ]),
  BroodRecord: async (db, keys) =>
    (
      await db.broodRecord.findMany({
        select: {
          siteId: true,
          submissionId: true,
          year: true,
          femaleId: true,
          layDateDoy: true,
          clutchSize: true,
          hatchDateDoy: true,
          fledglings: true,
          recruits: true,
        },
      })
    ).map((b) => [
      required(keys.siteCode, b.siteId, "site"),
      ...required(keys.submissionKey, b.submissionId, "submission"),
      b.year,
      b.femaleId,
      b.layDateDoy,
      b.clutchSize,
      b.hatchDateDoy,
      b.fledglings,
      b.recruits,
    ]),
  Estimate: async (db, keys) =>
    (await db.estimate.findMany()).map((e) => [
      required(keys.siteCode, e.siteId, "site"),
      ...(e.submissionId === null ? [null] : required(keys.submissionKey, e.submissionId, "submission")),
      e.outcome,
      e.level,
      e.term,
      e.year,
      e.value,
      e.standardError,
      e.n,
      e.scale,
      e.link,
      e.source,
      e.method,
    ]),
  Analysis: async (db, keys) =>
    (await db.analysis.findMany({ select: { name: true, specification: true, createdById: true } })).map((a) => [
      a.name,
      a.specification,
      optional(keys.userEmail, a.createdById, "user"),
    ]),
  AnalysisRun: async (db) =>
    (await db.analysisRun.findMany({ include: { analysis: { select: { name: true } } } })).map((r) => [
      r.analysis.name,
      r.dataFingerprint,
      r.result,
      r.engineVersion,
    ]),
  NetworkSetting: async (db) => (await db.networkSetting.findMany({ select: { key: true, value: true } })).map((s) => [s.key, s.value]),
  ColumnMapping: async (db, keys) =>
    (await db.columnMapping.findMany({ select: { siteId: true, kind: true, mapping: true } })).map((m) => [
      required(keys.siteCode, m.siteId, "site"),
      m.kind,
      m.mapping,
    ]),
  Job: async (db, keys) =>
    (await db.job.findMany({ select: { kind: true, payload: true, status: true, progress: true, message: true, result: true, siteId: true } })).map((j) => [
      j.kind,
      j.payload,
      j.status,
      j.progress,
      j.message,
      j.result,
      optional(keys.siteCode, j.siteId, "site"),
    ]),
};

/** The tables the checksum covers, by model name. */
export const CHECKSUM_TABLES: readonly string[] = Object.keys(TABLES).sort();

async function naturalKeys(db: Db): Promise<Keys> {
  const [sites, users, submissions] = await Promise.all([
    db.site.findMany({ select: { id: true, code: true } }),
    db.user.findMany({ select: { id: true, email: true } }),
    db.submission.findMany({ select: { id: true, siteId: true, kind: true, sha256: true, supersedesId: true } }),
  ]);
  const siteCode = new Map(sites.map((s) => [s.id, s.code]));
  const userEmail = new Map(users.map((u) => [u.id, u.email]));
  const supersedes = new Map(submissions.map((s) => [s.id, s.supersedesId]));
  const submissionKey = new Map<number, Cell[]>();
  for (const s of submissions) {
    // Depth in the chain of superseded submissions: 0 for a site's first of its kind.
    let depth = 0;
    for (let previous = s.supersedesId; previous !== null; previous = supersedes.get(previous) ?? null) {
      depth += 1;
      if (depth > submissions.length) throw new Error("network checksum: submissions supersede each other in a cycle");
    }
    submissionKey.set(s.id, [required(siteCode, s.siteId, "site"), s.kind, depth, s.sha256]);
  }
  return { siteCode, userEmail, submissionKey };
}

/**
 * The checksum of everything `db` holds. Reads every table in full (a demo network of ~100k
 * broods takes about a second). Throws when a foreign key points at a missing row.
 * Example: (await networkChecksum(db)).sha256 is 64 hex digits; tables.BroodRecord.rows counts broods.
 */
export async function networkChecksum(db: Db): Promise<NetworkChecksum> {
  const keys = await naturalKeys(db);
  const total = createHash("sha256");
  const tables: Record<string, TableChecksum> = {};
  for (const name of CHECKSUM_TABLES) {
    const rendered = (await TABLES[name]!(db, keys)).map((row) => JSON.stringify(row));
    rendered.sort();
    const hash = createHash("sha256").update(`${name}\n${rendered.length}\n`);
    for (const line of rendered) hash.update(`${line}\n`);
    const sha256 = hash.digest("hex");
    tables[name] = { rows: rendered.length, sha256 };
    total.update(`${name} ${rendered.length} ${sha256}\n`);
  }
  return { sha256: total.digest("hex"), tables };
}
