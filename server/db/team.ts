import { and, desc, eq, isNull, sql, type AnyColumn } from 'drizzle-orm';
import type { ProjectRole } from '@shared/api';
import type { Db } from './client';
import type { DbOrTx } from './models';
import { oneRow } from './rows';
import { memberships, projects, sheets, users } from './schema';
import { activity, checks, comments, corrections, invitations } from './schema-team';

/** The account's name, or for a row imported from a bundle the name recorded there. */
export const recordedName = (authorName: AnyColumn) =>
  sql<string | null>`coalesce(${users.name}, ${authorName})`;

// Invitations

export async function insertInvitation(
  db: DbOrTx,
  values: {
    projectId: string;
    email: string;
    role: ProjectRole;
    tokenHash: string;
    invitedBy: string;
    expiresAt: Date;
  },
) {
  return oneRow(await db.insert(invitations).values(values).returning(), 'insert invitation');
}

const invitationColumns = {
  id: invitations.id,
  projectId: invitations.projectId,
  email: invitations.email,
  role: invitations.role,
  createdAt: invitations.createdAt,
  lastSentAt: invitations.lastSentAt,
  expiresAt: invitations.expiresAt,
  acceptedAt: invitations.acceptedAt,
  revokedAt: invitations.revokedAt,
  invitedBy: users.name,
};

export async function listInvitations(db: Db, projectId: string) {
  return db
    .select(invitationColumns)
    .from(invitations)
    .leftJoin(users, eq(users.id, invitations.invitedBy))
    .where(
      and(
        eq(invitations.projectId, projectId),
        isNull(invitations.acceptedAt),
        isNull(invitations.revokedAt),
      ),
    )
    .orderBy(desc(invitations.createdAt));
}

export async function findInvitation(db: DbOrTx, projectId: string, id: string) {
  const [row] = await db
    .select(invitationColumns)
    .from(invitations)
    .leftJoin(users, eq(users.id, invitations.invitedBy))
    .where(and(eq(invitations.projectId, projectId), eq(invitations.id, id)));
  return row;
}

export async function findInvitationByToken(db: DbOrTx, tokenHash: string) {
  const [row] = await db
    .select({ ...invitationColumns, projectName: projects.name })
    .from(invitations)
    .innerJoin(projects, eq(projects.id, invitations.projectId))
    .leftJoin(users, eq(users.id, invitations.invitedBy))
    .where(eq(invitations.tokenHash, tokenHash));
  return row;
}

/** Marks a pending, unexpired invitation accepted; undefined if it was not pending. */
export async function acceptInvitation(db: DbOrTx, id: string, userId: string) {
  const [row] = await db
    .update(invitations)
    .set({ acceptedAt: sql`now()`, acceptedBy: userId })
    .where(
      and(
        eq(invitations.id, id),
        isNull(invitations.acceptedAt),
        isNull(invitations.revokedAt),
        sql`${invitations.expiresAt} > now()`,
      ),
    )
    .returning();
  return row;
}

export async function revokeInvitation(db: Db, projectId: string, id: string) {
  const rows = await db
    .update(invitations)
    .set({ revokedAt: sql`now()` })
    .where(
      and(
        eq(invitations.projectId, projectId),
        eq(invitations.id, id),
        isNull(invitations.acceptedAt),
        isNull(invitations.revokedAt),
      ),
    )
    .returning({ id: invitations.id });
  return rows.length > 0;
}

export async function renewInvitation(db: Db, id: string, tokenHash: string, expiresAt: Date) {
  await db
    .update(invitations)
    .set({ tokenHash, expiresAt, lastSentAt: sql`now()` })
    .where(eq(invitations.id, id));
}

// Members

export async function countOwners(db: DbOrTx, projectId: string): Promise<number> {
  const rows = await db
    .select({ n: sql<number>`count(*)::int` })
    .from(memberships)
    .where(and(eq(memberships.projectId, projectId), eq(memberships.role, 'owner')));
  return oneRow(rows, 'count owners').n;
}

export async function findMemberRole(db: DbOrTx, projectId: string, userId: string) {
  const [row] = await db
    .select({ role: memberships.role })
    .from(memberships)
    .where(and(eq(memberships.projectId, projectId), eq(memberships.userId, userId)))
    .for('update');
  return row?.role;
}

export async function setMemberRole(
  db: DbOrTx,
  projectId: string,
  userId: string,
  role: ProjectRole,
) {
  await db
    .update(memberships)
    .set({ role })
    .where(and(eq(memberships.projectId, projectId), eq(memberships.userId, userId)));
}

export async function deleteMember(db: DbOrTx, projectId: string, userId: string) {
  await db
    .delete(memberships)
    .where(and(eq(memberships.projectId, projectId), eq(memberships.userId, userId)));
}

/** Serialises role changes of one project, so two owners cannot demote each other at once. */
export async function lockProject(db: DbOrTx, projectId: string) {
  await db
    .select({ id: projects.id })
    .from(projects)
    .where(eq(projects.id, projectId))
    .for('update');
}

// Checks

export async function listChecks(db: Db, projectId: string) {
  return db
    .select({
      dimension: checks.dimension,
      value: checks.value,
      fingerprint: checks.fingerprint,
      revision: checks.revision,
      createdAt: checks.createdAt,
      userId: checks.userId,
      userName: recordedName(checks.authorName),
    })
    .from(checks)
    .leftJoin(users, eq(users.id, checks.userId))
    .where(eq(checks.projectId, projectId))
    .orderBy(checks.dimension);
}

export async function upsertCheck(
  db: Db,
  values: {
    projectId: string;
    dimension: string;
    userId: string;
    value: number;
    fingerprint: string;
    revision: number;
  },
) {
  await db
    .insert(checks)
    .values(values)
    .onConflictDoUpdate({
      target: [checks.projectId, checks.dimension],
      set: {
        userId: values.userId,
        value: values.value,
        fingerprint: values.fingerprint,
        revision: values.revision,
        createdAt: sql`now()`,
      },
    });
}

export async function deleteCheck(db: Db, projectId: string, dimension: string) {
  const rows = await db
    .delete(checks)
    .where(and(eq(checks.projectId, projectId), eq(checks.dimension, dimension)))
    .returning({ dimension: checks.dimension });
  return rows.length > 0;
}

// Comments

export async function insertComment(
  db: DbOrTx,
  values: {
    projectId: string;
    targetKind: 'dimension' | 'relation' | 'pin' | 'sheet';
    targetId: string;
    userId: string;
    body: string;
    mentions: string[];
  },
) {
  return oneRow(await db.insert(comments).values(values).returning(), 'insert comment');
}

export async function listComments(
  db: Db,
  projectId: string,
  filter: { targetKind?: string; targetId?: string },
) {
  const where = [eq(comments.projectId, projectId)];
  if (filter.targetKind) where.push(eq(comments.targetKind, filter.targetKind as 'dimension'));
  if (filter.targetId) where.push(eq(comments.targetId, filter.targetId));
  return db
    .select({
      id: comments.id,
      targetKind: comments.targetKind,
      targetId: comments.targetId,
      body: comments.body,
      mentions: comments.mentions,
      createdAt: comments.createdAt,
      userId: comments.userId,
      userName: recordedName(comments.authorName),
    })
    .from(comments)
    .leftJoin(users, eq(users.id, comments.userId))
    .where(and(...where))
    .orderBy(comments.createdAt);
}

// Corrections

export async function insertCorrection(db: DbOrTx, values: typeof corrections.$inferInsert) {
  return oneRow(await db.insert(corrections).values(values).returning(), 'insert correction');
}

export async function listCorrections(db: Db, projectId: string) {
  return db
    .select({
      id: corrections.id,
      sheetId: corrections.sheetId,
      dimension: corrections.dimension,
      wrong: corrections.wrong,
      corrected: corrections.corrected,
      reason: corrections.reason,
      source: corrections.source,
      sourceNote: corrections.sourceNote,
      createdAt: corrections.createdAt,
      userId: corrections.userId,
      userName: recordedName(corrections.authorName),
      sheetTitle: sheets.title,
    })
    .from(corrections)
    .leftJoin(users, eq(users.id, corrections.userId))
    .leftJoin(sheets, eq(sheets.id, corrections.sheetId))
    .where(eq(corrections.projectId, projectId))
    .orderBy(corrections.createdAt);
}

// Activity

export async function insertActivity(
  db: DbOrTx,
  values: {
    projectId: string;
    userId: string | null;
    kind: string;
    summary: string;
    details?: unknown;
  },
) {
  await db.insert(activity).values({ ...values, details: values.details ?? {} });
}

export async function listActivity(
  db: Db,
  projectId: string,
  kind: string | undefined,
  limit: number,
) {
  const where = [eq(activity.projectId, projectId)];
  if (kind) where.push(eq(activity.kind, kind));
  return db
    .select({
      id: activity.id,
      kind: activity.kind,
      summary: activity.summary,
      details: activity.details,
      createdAt: activity.createdAt,
      userId: activity.userId,
      userName: recordedName(activity.authorName),
    })
    .from(activity)
    .leftJoin(users, eq(users.id, activity.userId))
    .where(and(...where))
    .orderBy(desc(activity.id))
    .limit(limit);
}
