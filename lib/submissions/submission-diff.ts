import type { Db } from "../db/client";
import { readBroodRecordSnapshots } from "../db/brood-record-sql";
import type { SubmissionKindName } from "../ingest/schemas/vocabulary";
import { KIND_RULES, rowFromSnapshot, rowSnapshot, type KindRules, type RowsOfKind } from "../ingest/submission-kind-rules";

/** One field that differs between the current and the new version of a row. */
export interface FieldChange {
  field: string;
  from: unknown;
  to: unknown;
}

export interface DiffExample {
  /** The row's natural key in words: "female F-203 in 2011". */
  key: string;
  changes?: FieldChange[];
}

/**
 * What accepting a version would change, row by row on the natural keys (female and year for
 * brood records, year for site-years, outcome, level, term and year for estimates).
 */
export interface SubmissionDiff {
  /** The version compared against (the site's current one), or null when there is none. */
  againstSubmissionId: number | null;
  added: number;
  changed: number;
  removed: number;
  unchanged: number;
  /** A few rows of each sort, in file order (removed ones in stored order). */
  examples: { added: DiffExample[]; changed: DiffExample[]; removed: DiffExample[] };
}

/** Examples kept per sort of change. */
export const DIFF_EXAMPLES = 5;

/** Natural key -> snapshot of the compared values, of every row of a stored submission. */
type StoredIndex = Map<string, string>;

/**
 * Reads every row of a stored submission, page by page, as snapshots keyed by natural key.
 * Memory: two short strings per row.
 */
export async function loadStoredSnapshots<K extends SubmissionKindName>(db: Db, kind: K, submissionId: number | null): Promise<StoredIndex> {
  const index: StoredIndex = new Map();
  if (submissionId === null) return index;
  if (kind === "brood_records") {
    await readBroodRecordSnapshots(db, submissionId, (page) => {
      for (const row of page) index.set(row.key, row.snapshot);
    });
    return index;
  }
  const rules = KIND_RULES[kind] as KindRules<RowsOfKind[K]>;
  const select = Object.fromEntries([...rules.keyFields, ...rules.comparedFields].map((f) => [f, true]));
  const query = { where: { submissionId }, select, orderBy: { id: "asc" as const } };
  // Site-years and estimates are small (one row per year or per estimate).
  const rows = (kind === "site_year_covariates" ? await db.siteYear.findMany(query) : await db.estimate.findMany(query)) as unknown as RowsOfKind[K][];
  for (const row of rows) index.set(rules.keyOf(row), rowSnapshot(rules, row));
  return index;
}

/** Builds the diff of a new version against the stored one, one row at a time. */
export class SubmissionDiffBuilder<T> {
  private added = 0;
  private changed = 0;
  private unchangedCount = 0;
  private readonly examples: SubmissionDiff["examples"] = { added: [], changed: [], removed: [] };

  /** `stored` is consumed: what is left at the end was removed. */
  constructor(
    private readonly rules: KindRules<T>,
    private readonly stored: StoredIndex,
    private readonly againstSubmissionId: number | null,
  ) {}

  add(row: T): void {
    const key = this.rules.keyOf(row);
    const before = this.stored.get(key);
    if (before === undefined) {
      this.added += 1;
      if (this.examples.added.length < DIFF_EXAMPLES) this.examples.added.push({ key: this.rules.describeKey(row) });
      return;
    }
    this.stored.delete(key);
    const after = rowSnapshot(this.rules, row);
    if (after === before) {
      this.unchangedCount += 1;
      return;
    }
    this.changed += 1;
    if (this.examples.changed.length < DIFF_EXAMPLES) {
      const old = rowFromSnapshot(this.rules, key, before) as Record<string, unknown>;
      const now = row as Record<string, unknown>;
      const changes = this.rules.comparedFields
        .filter((f) => (old[f] ?? null) !== (now[f] ?? null))
        .map((f) => ({ field: f, from: old[f] ?? null, to: now[f] ?? null }));
      this.examples.changed.push({ key: this.rules.describeKey(row), changes });
    }
  }

  finish(): SubmissionDiff {
    for (const [key, snapshot] of this.stored) {
      if (this.examples.removed.length >= DIFF_EXAMPLES) break;
      this.examples.removed.push({ key: this.rules.describeKey(rowFromSnapshot(this.rules, key, snapshot)) });
    }
    return {
      againstSubmissionId: this.againstSubmissionId,
      added: this.added,
      changed: this.changed,
      removed: this.stored.size,
      unchanged: this.unchangedCount,
      examples: this.examples,
    };
  }
}

/** Whether accepting the version would change nothing. */
export function isEmptyDiff(diff: SubmissionDiff): boolean {
  return diff.added === 0 && diff.changed === 0 && diff.removed === 0;
}

/** The diff between two stored submissions of one kind (e.g. before restoring `toId` over `fromId`). */
export async function diffStoredSubmissions(db: Db, kind: SubmissionKindName, fromId: number | null, toId: number): Promise<SubmissionDiff> {
  const rules = KIND_RULES[kind] as KindRules<unknown>;
  const builder = new SubmissionDiffBuilder(rules, await loadStoredSnapshots(db, kind, fromId), fromId);
  for (const [key, snapshot] of await loadStoredSnapshots(db, kind, toId)) builder.add(rowFromSnapshot(rules, key, snapshot));
  return builder.finish();
}
