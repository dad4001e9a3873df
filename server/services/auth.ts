import { createHash, randomBytes } from 'node:crypto';
import type { LoginBody, RegisterBody, User } from '@shared/api';
import type { PasswordHasher } from '../auth/passwords';
import type { Db } from '../db/client';
import type { UserRow } from '../db/schema';
import {
  consumePasswordReset,
  deleteSessionsOfUser,
  findUserByEmail,
  findUserById,
  insertPasswordReset,
  insertUser,
  setPasswordHash,
} from '../db/users';
import { AppError, badRequest, conflict } from '../http/errors';
import type { Mailer } from '../mail/mailer';

const resetLifetimeMs = 3600_000;

export function toUser(row: UserRow): User {
  return { id: row.id, email: row.email, name: row.name, siteRole: row.siteRole };
}

const hashToken = (token: string) => createHash('sha256').update(token).digest('hex');

export interface AuthServiceDeps {
  db: Db;
  hasher: PasswordHasher;
  mailer: Mailer;
  appUrl: string;
}

export function createAuthService({ db, hasher, mailer, appUrl }: AuthServiceDeps) {
  return {
    async register(body: RegisterBody): Promise<User> {
      const row = await insertUser(db, {
        email: body.email,
        name: body.name,
        passwordHash: await hasher.hash(body.password),
      });
      if (!row) {
        throw conflict(
          'An account with that e-mail already exists. Sign in, or reset the password.',
          {
            fields: [{ path: 'email', message: 'Already registered' }],
          },
        );
      }
      return toUser(row);
    },

    /** The user for a correct e-mail and password; one message for every failure. */
    async login(body: LoginBody): Promise<User> {
      const row = await findUserByEmail(db, body.email);
      const ok = await hasher.verify(body.password, row?.passwordHash);
      if (!row || !ok) {
        throw new AppError(
          'unauthenticated',
          'That e-mail and password do not match an account.',
          401,
        );
      }
      return toUser(row);
    },

    async currentUser(userId: string | undefined): Promise<User | null> {
      if (!userId) return null;
      const row = await findUserById(db, userId);
      return row ? toUser(row) : null;
    },

    /**
     * Sends a single-use, one-hour reset link when the address has an account. The caller
     * answers the same either way; the mail is sent after the answer so timing tells nothing.
     */
    async requestPasswordReset(email: string): Promise<void> {
      const row = await findUserByEmail(db, email);
      if (!row) return;
      const token = randomBytes(32).toString('base64url');
      await insertPasswordReset(
        db,
        row.id,
        hashToken(token),
        new Date(Date.now() + resetLifetimeMs),
      );
      const link = `${appUrl}/reset-password?token=${token}`;
      mailer
        .send({
          to: row.email,
          subject: 'Reset your Fairsheet password',
          text:
            `Hello ${row.name},\n\nSomeone (we hope you) asked to reset the password of your Fairsheet account.\n` +
            `Open this link within one hour to choose a new one. It works once.\n\n${link}\n\n` +
            `If you did not ask, ignore this mail: your password stays as it is.\n`,
        })
        .catch((err: Error) => console.error('[mail] password reset not sent:', err.message));
    },

    async confirmPasswordReset(token: string, password: string): Promise<void> {
      const userId = await consumePasswordReset(db, hashToken(token));
      if (!userId) {
        throw badRequest('That reset link is not valid any more. Ask for a new one.', {
          fields: [{ path: 'token', message: 'Used, expired or unknown' }],
        });
      }
      await setPasswordHash(db, userId, await hasher.hash(password));
      await deleteSessionsOfUser(db, userId);
    },
  };
}

export type AuthService = ReturnType<typeof createAuthService>;
