import { and, asc, desc, eq, sql } from 'drizzle-orm';
import type { Db } from './client';
import type { DbOrTx } from './models';
import { oneRow } from './rows';
import {
  memberships,
  projectModels,
  projects,
  sheets,
  users,
  type MembershipRow,
  type ProjectRow,
} from './schema';

export type Role = MembershipRow['role'];

export async function listProjectsOfUser(db: Db, userId: string) {
  return db
    .select({ project: projects, role: memberships.role })
    .from(memberships)
    .innerJoin(projects, eq(projects.id, memberships.projectId))
    .where(eq(memberships.userId, userId))
    .orderBy(desc(projects.updatedAt));
}

/**
 * The signed-in user's membership of a project, with the project and its model's revision.
 * Asked before every project request, so the statement is built once per database handle and
 * prepared once per connection rather than rebuilt and re-planned on every call.
 */
export async function findMembership(db: Db, projectId: string, userId: string) {
  let query = membershipQueries.get(db);
  if (!query) membershipQueries.set(db, (query = prepareMembershipQuery(db)));
  const [row] = await query.execute({ projectId, userId });
  return row;
}

const membershipQueries = new WeakMap<Db, ReturnType<typeof prepareMembershipQuery>>();

function prepareMembershipQuery(db: Db) {
  return db
    .select({ project: projects, role: memberships.role, modelRevision: projectModels.revision })
    .from(memberships)
    .innerJoin(projects, eq(projects.id, memberships.projectId))
    .leftJoin(projectModels, eq(projectModels.projectId, memberships.projectId))
    .where(
      and(
        eq(memberships.projectId, sql.placeholder('projectId')),
        eq(memberships.userId, sql.placeholder('userId')),
      ),
    )
    .prepare('find_membership');
}

/** Inserts a project with its owner; call inside the service's transaction. */
export async function insertProject(
  db: DbOrTx,
  ownerId: string,
  values: Pick<ProjectRow, 'name' | 'displayUnit' | 'modelScale'>,
): Promise<ProjectRow> {
  const project = oneRow(await db.insert(projects).values(values).returning(), 'insert project');
  await db.insert(memberships).values({ projectId: project.id, userId: ownerId, role: 'owner' });
  return project;
}

export async function updateProject(
  db: Db,
  projectId: string,
  values: Partial<Pick<ProjectRow, 'name' | 'displayUnit' | 'modelScale'>>,
): Promise<ProjectRow> {
  const rows = await db
    .update(projects)
    .set({ ...values, updatedAt: sql`now()` })
    .where(eq(projects.id, projectId))
    .returning();
  return oneRow(rows, 'update project');
}

/**
 * Locks the project's row for the rest of the transaction and answers the stored files its
 * sheets use. An upload to the project waits on the lock (its sheets' foreign key), so no file
 * can join the project between this answer and the project's deletion.
 */
export async function lockProjectFiles(tx: DbOrTx, projectId: string): Promise<string[]> {
  await tx
    .select({ id: projects.id })
    .from(projects)
    .where(eq(projects.id, projectId))
    .for('update');
  const rows = await tx
    .selectDistinct({ sha256: sheets.fileSha256 })
    .from(sheets)
    .where(eq(sheets.projectId, projectId));
  return rows.map((r) => r.sha256);
}

export async function deleteProject(db: DbOrTx, projectId: string) {
  await db.delete(projects).where(eq(projects.id, projectId));
}

export async function listMembers(db: Db, projectId: string) {
  return db
    .select({
      userId: users.id,
      name: users.name,
      email: users.email,
      role: memberships.role,
      since: memberships.createdAt,
    })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.projectId, projectId))
    .orderBy(asc(memberships.createdAt));
}

export async function upsertMembership(db: DbOrTx, projectId: string, userId: string, role: Role) {
  await db
    .insert(memberships)
    .values({ projectId, userId, role })
    .onConflictDoUpdate({ target: [memberships.projectId, memberships.userId], set: { role } });
}

export async function findProjectByName(db: Db, name: string) {
  const [row] = await db.select().from(projects).where(eq(projects.name, name));
  return row;
}
