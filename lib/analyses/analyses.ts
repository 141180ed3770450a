import type { Db } from "../db/client";
import { AppError } from "../errors/app-error";
import type { Actor } from "../auth/actor";
import { recordAudit } from "../audit/record-audit";
import { LATITUDE_MODERATOR_KEY } from "../network/moderator-input";
import { analysisSpecificationSchema, type AnalysisSpecification } from "./specification";

export interface AnalysisSummary {
  id: number;
  name: string;
  specification: AnalysisSpecification;
  createdBy: string | null;
  createdAt: Date;
  updatedAt: Date;
  runs: { id: number; createdAt: Date; engineVersion: string; dataFingerprint: string }[];
}

const INCLUDE = {
  createdBy: { select: { displayName: true } },
  runs: { orderBy: { id: "desc" as const }, select: { id: true, createdAt: true, engineVersion: true, dataFingerprint: true } },
};

type AnalysisRow = NonNullable<Awaited<ReturnType<typeof findAnalysis>>>;
function findAnalysis(db: Db, id: number) {
  return db.analysis.findUnique({ where: { id }, include: INCLUDE });
}

/** The stored specification, parsed again: a stored text that no longer parses is an error, never ignored. */
export function parseStoredSpecification(analysisId: number, text: string): AnalysisSpecification {
  let raw: unknown;
  try {
    raw = JSON.parse(text);
  } catch {
    throw new AppError("internal", `analysis ${analysisId} has a stored specification that is not JSON`);
  }
  const parsed = analysisSpecificationSchema.safeParse(raw);
  if (!parsed.success) {
    throw new AppError("internal", `analysis ${analysisId} has a stored specification that no longer validates: ${parsed.error.issues.map((i) => i.message).join("; ")}`);
  }
  return parsed.data;
}

function summary(row: AnalysisRow): AnalysisSummary {
  return {
    id: row.id,
    name: row.name,
    specification: parseStoredSpecification(row.id, row.specification),
    createdBy: row.createdBy?.displayName ?? null,
    createdAt: row.createdAt,
    updatedAt: row.updatedAt,
    runs: row.runs,
  };
}

/**
 * Saves an analysis specification, with its audit entry in the same transaction. Throws AppError invalid_input naming a moderator that does not
 * exist, and conflict when the name is taken.
 */
export async function createAnalysis(db: Db, specification: AnalysisSpecification, actor: Actor): Promise<AnalysisSummary> {
  const keys = specification.moderators.filter((key) => key !== LATITUDE_MODERATOR_KEY);
  const known = new Set((await db.moderator.findMany({ where: { key: { in: keys } }, select: { key: true } })).map((m) => m.key));
  const unknown = specification.moderators.map((key, index) => ({ key, index })).filter(({ key }) => key !== LATITUDE_MODERATOR_KEY && !known.has(key));
  if (unknown.length) {
    throw new AppError(
      "invalid_input",
      `unknown moderator${unknown.length === 1 ? "" : "s"}: ${unknown.map((u) => u.key).join(", ")}`,
      unknown.map(({ key, index }) => ({ field: `moderators.${index}`, message: `moderator ${key} does not exist`, value: key })),
    );
  }
  if (await db.analysis.findUnique({ where: { name: specification.name }, select: { id: true } })) {
    throw new AppError("conflict", `an analysis named '${specification.name}' already exists`, [{ field: "name", message: "already in use", value: specification.name }]);
  }
  const created = await db.$transaction(async (tx) => {
    const analysis = await tx.analysis.create({
      data: { name: specification.name, specification: JSON.stringify(specification), createdById: actor.userId },
      select: { id: true },
    });
    await recordAudit(tx, actor, { action: "analysis.create", entityType: "Analysis", entityId: analysis.id, after: specification });
    return analysis;
  });
  return getAnalysis(db, created.id);
}

/** Every saved analysis, newest first. */
export async function listAnalyses(db: Db): Promise<AnalysisSummary[]> {
  const rows = await db.analysis.findMany({ orderBy: { id: "desc" }, include: INCLUDE });
  return rows.map(summary);
}

/** One analysis with its runs (newest first). Throws AppError not_found for an unknown id. */
export async function getAnalysis(db: Db, id: number): Promise<AnalysisSummary> {
  const row = await findAnalysis(db, id);
  if (!row) throw new AppError("not_found", `analysis ${id} does not exist`, [{ field: "id", message: "unknown analysis", value: String(id) }]);
  return summary(row);
}
