import { and, desc, eq, sql } from 'drizzle-orm';
import type { Db } from './client';
import { modelRevisions, projectModels, projects, users } from './schema';
import { recordedName } from './team';

export type Tx = Parameters<Parameters<Db['transaction']>[0]>[0];
export type DbOrTx = Db | Tx;

export async function findModel(db: DbOrTx, projectId: string) {
  const [row] = await db
    .select({
      revision: projectModels.revision,
      model: projectModels.model,
      result: projectModels.result,
      features: projectModels.features,
      updatedAt: projectModels.updatedAt,
      updatedBy: users.name,
    })
    .from(projectModels)
    .leftJoin(users, eq(users.id, projectModels.updatedBy))
    .where(eq(projectModels.projectId, projectId));
  return row;
}

/** Just the revision number: the cheap question before a cached answer is reused. */
export async function findModelRevision(
  db: DbOrTx,
  projectId: string,
): Promise<number | undefined> {
  const [row] = await db
    .select({ revision: projectModels.revision })
    .from(projectModels)
    .where(eq(projectModels.projectId, projectId));
  return row?.revision;
}

/** Locks the model row for the rest of the transaction, so two saves cannot interleave. */
export async function lockModel(tx: Tx, projectId: string) {
  const [row] = await tx
    .select({ revision: projectModels.revision, model: projectModels.model })
    .from(projectModels)
    .where(eq(projectModels.projectId, projectId))
    .for('update');
  return row;
}

export async function insertModel(
  db: DbOrTx,
  projectId: string,
  model: unknown,
  solved: { result: unknown; features?: unknown },
  userId: string,
) {
  await db.insert(projectModels).values({
    projectId,
    revision: 0,
    model,
    result: solved.result,
    features: solved.features ?? null,
    updatedBy: userId,
  });
}

export async function writeModel(
  tx: Tx,
  projectId: string,
  values: { revision: number; model: unknown; result: unknown; features?: unknown; userId: string },
) {
  await tx
    .update(projectModels)
    .set({
      revision: values.revision,
      model: values.model,
      result: values.result,
      features: values.features ?? null,
      updatedBy: values.userId,
      updatedAt: sql`now()`,
    })
    .where(eq(projectModels.projectId, projectId));
  await tx
    .update(projects)
    .set({ updatedAt: sql`now()` })
    .where(eq(projects.id, projectId));
}

export async function insertRevision(
  db: DbOrTx,
  values: {
    projectId: string;
    revision: number;
    userId: string;
    summary: string;
    diff: unknown;
    model: unknown;
  },
) {
  await db.insert(modelRevisions).values(values);
}

export async function listRevisions(db: Db, projectId: string) {
  return db
    .select({
      revision: modelRevisions.revision,
      createdAt: modelRevisions.createdAt,
      summary: modelRevisions.summary,
      userId: modelRevisions.userId,
      userName: recordedName(modelRevisions.authorName),
    })
    .from(modelRevisions)
    .leftJoin(users, eq(users.id, modelRevisions.userId))
    .where(eq(modelRevisions.projectId, projectId))
    .orderBy(desc(modelRevisions.revision));
}

export async function findRevision(db: Db, projectId: string, revision: number) {
  const [row] = await db
    .select({
      revision: modelRevisions.revision,
      createdAt: modelRevisions.createdAt,
      summary: modelRevisions.summary,
      diff: modelRevisions.diff,
      model: modelRevisions.model,
      userId: modelRevisions.userId,
      userName: recordedName(modelRevisions.authorName),
    })
    .from(modelRevisions)
    .leftJoin(users, eq(users.id, modelRevisions.userId))
    .where(and(eq(modelRevisions.projectId, projectId), eq(modelRevisions.revision, revision)));
  return row;
}
