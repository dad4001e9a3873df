import { and, eq, gt, isNull, sql } from 'drizzle-orm';
import type { Db } from './client';
import { passwordResets, sessions, users, type UserRow } from './schema';

export async function findUserByEmail(db: Db, email: string): Promise<UserRow | undefined> {
  const [row] = await db.select().from(users).where(eq(users.email, email));
  return row;
}

export async function findUserById(db: Db, id: string): Promise<UserRow | undefined> {
  const [row] = await db.select().from(users).where(eq(users.id, id));
  return row;
}

/** Inserts a user; answers undefined when the e-mail is taken (unique violation). */
export async function insertUser(
  db: Db,
  values: { email: string; name: string; passwordHash: string; siteRole?: 'admin' | 'member' },
): Promise<UserRow | undefined> {
  const rows = await db.insert(users).values(values).onConflictDoNothing().returning();
  return rows[0];
}

export async function setPasswordHash(db: Db, userId: string, passwordHash: string) {
  await db.update(users).set({ passwordHash }).where(eq(users.id, userId));
}

export async function insertPasswordReset(
  db: Db,
  userId: string,
  tokenHash: string,
  expiresAt: Date,
) {
  await db.insert(passwordResets).values({ userId, tokenHash, expiresAt });
}

/** Marks an unused, unexpired reset token used and answers its user; undefined if none. */
export async function consumePasswordReset(db: Db, tokenHash: string): Promise<string | undefined> {
  const [row] = await db
    .update(passwordResets)
    .set({ usedAt: sql`now()` })
    .where(
      and(
        eq(passwordResets.tokenHash, tokenHash),
        isNull(passwordResets.usedAt),
        gt(passwordResets.expiresAt, sql`now()`),
      ),
    )
    .returning({ userId: passwordResets.userId });
  return row?.userId;
}

/** Signs a user out everywhere (after a password reset). */
export async function deleteSessionsOfUser(db: Db, userId: string) {
  await db.delete(sessions).where(sql`${sessions.sess}->>'userId' = ${userId}`);
}
