import { and, eq, gt, isNull, ne, sql } from 'drizzle-orm';
import type { Db } from './client';
import { emailConfirmations, passwordResets, sessions, users, type UserRow } from './schema';

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
  values: {
    email: string;
    name: string;
    passwordHash: string;
    siteRole?: 'admin' | 'member';
    emailVerifiedAt?: Date;
  },
): Promise<UserRow | undefined> {
  const rows = await db.insert(users).values(values).onConflictDoNothing().returning();
  return rows[0];
}

export async function setPasswordHash(db: Db, userId: string, passwordHash: string) {
  await db.update(users).set({ passwordHash }).where(eq(users.id, userId));
}

/** Records a new reset link for the account; every older link of the account stops working. */
export async function insertPasswordReset(
  db: Db,
  userId: string,
  tokenHash: string,
  expiresAt: Date,
) {
  await db.transaction(async (tx) => {
    await tx
      .update(passwordResets)
      .set({ usedAt: sql`now()` })
      .where(and(eq(passwordResets.userId, userId), isNull(passwordResets.usedAt)));
    await tx.insert(passwordResets).values({ userId, tokenHash, expiresAt });
  });
}

/**
 * Marks an unused, unexpired reset token used and answers its user; undefined if none. Every
 * other link of the account ends with it, and the address counts as confirmed: the link
 * reached it.
 */
export async function consumePasswordReset(db: Db, tokenHash: string): Promise<string | undefined> {
  return db.transaction(async (tx) => {
    const [row] = await tx
      .update(passwordResets)
      .set({ usedAt: sql`now()` })
      .where(
        and(
          eq(passwordResets.tokenHash, tokenHash),
          isNull(passwordResets.usedAt),
          gt(passwordResets.expiresAt, sql`now()`),
        ),
      )
      .returning({ id: passwordResets.id, userId: passwordResets.userId });
    if (!row) return undefined;
    await tx
      .update(passwordResets)
      .set({ usedAt: sql`now()` })
      .where(
        and(
          eq(passwordResets.userId, row.userId),
          isNull(passwordResets.usedAt),
          ne(passwordResets.id, row.id),
        ),
      );
    await tx
      .update(users)
      .set({ emailVerifiedAt: sql`coalesce(${users.emailVerifiedAt}, now())` })
      .where(eq(users.id, row.userId));
    return row.userId;
  });
}

export async function markEmailVerified(db: Db, userId: string) {
  await db
    .update(users)
    .set({ emailVerifiedAt: sql`coalesce(${users.emailVerifiedAt}, now())` })
    .where(eq(users.id, userId));
}

/** A confirmation link: a registration waiting for it (name, password hash) or an account's. */
export async function insertEmailConfirmation(
  db: Db,
  values: {
    email: string;
    tokenHash: string;
    expiresAt: Date;
    userId?: string;
    name?: string;
    passwordHash?: string;
  },
) {
  await db.insert(emailConfirmations).values(values);
}

/** Takes an unexpired confirmation link (it works once); undefined if there is none. */
export async function consumeEmailConfirmation(db: Db, tokenHash: string) {
  const [row] = await db
    .delete(emailConfirmations)
    .where(
      and(
        eq(emailConfirmations.tokenHash, tokenHash),
        gt(emailConfirmations.expiresAt, sql`now()`),
      ),
    )
    .returning();
  return row;
}

/** Drops the registrations still waiting for an address that now has its account. */
export async function deletePendingRegistrations(db: Db, email: string) {
  await db
    .delete(emailConfirmations)
    .where(and(eq(emailConfirmations.email, email), isNull(emailConfirmations.userId)));
}

/** Signs a user out everywhere (after a password reset). */
export async function deleteSessionsOfUser(db: Db, userId: string) {
  await db.delete(sessions).where(sql`${sessions.sess}->>'userId' = ${userId}`);
}
