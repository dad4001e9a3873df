// A whole project's records as a bundle carries them: read for export, written on import.
// Authors travel as recorded text (name and address), never as this server's account ids.
import { and, asc, eq, gt, isNull, sql, type AnyColumn } from 'drizzle-orm';
import type { Db } from './client';
import type { DbOrTx } from './models';
import { memberships, modelRevisions, projectModels, users } from './schema';
import { activity, checks, comments, corrections, invitations } from './schema-team';

const author = (authorName: AnyColumn, authorEmail: AnyColumn) => ({
  authorName: sql<string | null>`coalesce(${users.name}, ${authorName})`,
  authorEmail: sql<string | null>`coalesce(${users.email}, ${authorEmail})`,
});

/** Every revision of the model, oldest first, with the whole model of each. */
export function listRevisionsForExport(db: Db, projectId: string) {
  return db
    .select({
      revision: modelRevisions.revision,
      createdAt: modelRevisions.createdAt,
      summary: modelRevisions.summary,
      diff: modelRevisions.diff,
      model: modelRevisions.model,
      ...author(modelRevisions.authorName, modelRevisions.authorEmail),
    })
    .from(modelRevisions)
    .leftJoin(users, eq(users.id, modelRevisions.userId))
    .where(eq(modelRevisions.projectId, projectId))
    .orderBy(asc(modelRevisions.revision));
}

export function listChecksForExport(db: Db, projectId: string) {
  return db
    .select({
      dimension: checks.dimension,
      value: checks.value,
      fingerprint: checks.fingerprint,
      revision: checks.revision,
      createdAt: checks.createdAt,
      ...author(checks.authorName, checks.authorEmail),
    })
    .from(checks)
    .leftJoin(users, eq(users.id, checks.userId))
    .where(eq(checks.projectId, projectId))
    .orderBy(asc(checks.dimension));
}

export function listCommentsForExport(db: Db, projectId: string) {
  return db
    .select({
      targetKind: comments.targetKind,
      targetId: comments.targetId,
      body: comments.body,
      mentions: comments.mentions,
      createdAt: comments.createdAt,
      ...author(comments.authorName, comments.authorEmail),
    })
    .from(comments)
    .leftJoin(users, eq(users.id, comments.userId))
    .where(eq(comments.projectId, projectId))
    .orderBy(asc(comments.createdAt), asc(comments.id));
}

export function listCorrectionsForExport(db: Db, projectId: string) {
  return db
    .select({
      sheetId: corrections.sheetId,
      dimension: corrections.dimension,
      wrong: corrections.wrong,
      corrected: corrections.corrected,
      reason: corrections.reason,
      source: corrections.source,
      sourceNote: corrections.sourceNote,
      createdAt: corrections.createdAt,
      ...author(corrections.authorName, corrections.authorEmail),
    })
    .from(corrections)
    .leftJoin(users, eq(users.id, corrections.userId))
    .where(eq(corrections.projectId, projectId))
    .orderBy(asc(corrections.createdAt), asc(corrections.id));
}

/** The whole time line, oldest first. */
export function listActivityForExport(db: Db, projectId: string) {
  return db
    .select({
      kind: activity.kind,
      summary: activity.summary,
      details: activity.details,
      createdAt: activity.createdAt,
      ...author(activity.authorName, activity.authorEmail),
    })
    .from(activity)
    .leftJoin(users, eq(users.id, activity.userId))
    .where(eq(activity.projectId, projectId))
    .orderBy(asc(activity.id));
}

/** The addresses that belong to the project: its members and its pending invitations. */
export async function listPeopleForExport(db: Db, projectId: string) {
  const members = await db
    .select({ email: users.email, role: memberships.role })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.projectId, projectId))
    .orderBy(asc(memberships.createdAt));
  const pending = await db
    .select({ email: invitations.email, role: invitations.role })
    .from(invitations)
    .where(
      and(
        eq(invitations.projectId, projectId),
        isNull(invitations.acceptedAt),
        isNull(invitations.revokedAt),
        gt(invitations.expiresAt, sql`now()`),
      ),
    )
    .orderBy(asc(invitations.createdAt));
  return { members, pending };
}

/** The current model of an imported project, at the revision its history ends with. */
export async function insertImportedModel(
  db: DbOrTx,
  values: { projectId: string; revision: number; model: unknown; result: unknown; userId: string },
) {
  const { userId, ...rest } = values;
  await db.insert(projectModels).values({ ...rest, updatedBy: userId });
}

/** Rows in slices, so a long history stays under PostgreSQL's 65,535 parameters a statement. */
async function insertInSlices<T>(rows: T[], insert: (slice: T[]) => Promise<unknown>, size = 500) {
  for (let i = 0; i < rows.length; i += size) await insert(rows.slice(i, i + size));
}

interface Recorded {
  projectId: string;
  createdAt: Date;
  authorName: string | null;
  authorEmail: string | null;
}

export async function insertRecordedRevisions(
  db: DbOrTx,
  rows: (Recorded & { revision: number; summary: string; diff: unknown; model: unknown })[],
) {
  // A revision holds a whole model (up to the 2 MB a save accepts): a few to a statement.
  await insertInSlices(rows, (slice) => db.insert(modelRevisions).values(slice), 8);
}

export async function insertRecordedChecks(
  db: DbOrTx,
  rows: (Recorded & { dimension: string; value: number; fingerprint: string; revision: number })[],
) {
  await insertInSlices(rows, (slice) => db.insert(checks).values(slice));
}

export async function insertRecordedComments(
  db: DbOrTx,
  rows: (Recorded & {
    targetKind: 'dimension' | 'relation' | 'pin' | 'sheet';
    targetId: string;
    body: string;
    mentions: string[];
  })[],
) {
  await insertInSlices(rows, (slice) => db.insert(comments).values(slice));
}

export async function insertRecordedCorrections(
  db: DbOrTx,
  rows: (Recorded & {
    sheetId: string | null;
    dimension: string | null;
    wrong: string;
    corrected: string;
    reason: string;
    source: string;
    sourceNote: string;
  })[],
) {
  await insertInSlices(rows, (slice) => db.insert(corrections).values(slice));
}

export async function insertRecordedActivity(
  db: DbOrTx,
  rows: (Recorded & { kind: string; summary: string; details: unknown })[],
) {
  await insertInSlices(rows, (slice) => db.insert(activity).values(slice));
}
