import { createHash, randomBytes } from 'node:crypto';
import type { LoginBody, RegisterBody, User } from '@shared/api';
import type { PasswordHasher } from '../auth/passwords';
import type { Db } from '../db/client';
import type { UserRow } from '../db/schema';
import { findInvitationByToken } from '../db/team';
import {
  consumeEmailConfirmation,
  consumePasswordReset,
  deletePendingRegistrations,
  deleteSessionsOfUser,
  findUserByEmail,
  findUserById,
  insertEmailConfirmation,
  insertPasswordReset,
  insertUser,
  markEmailVerified,
  setPasswordHash,
} from '../db/users';
import { AppError, badRequest, conflict } from '../http/errors';
import type { Mailer, MailMessage } from '../mail/mailer';

const resetLifetimeMs = 3600_000;
const confirmLifetimeMs = 24 * 3600_000;

export function toUser(row: UserRow): User {
  return { id: row.id, email: row.email, name: row.name, siteRole: row.siteRole };
}

const hashToken = (token: string) => createHash('sha256').update(token).digest('hex');

/** Mail goes out after the answer, so how long it takes tells nothing about the address. */
function sendLater(mailer: Mailer, message: MailMessage, what: string) {
  mailer
    .send(message)
    .catch((err: Error) => console.error(`[mail] ${what} not sent:`, err.message));
}

/**
 * Mails a link that confirms the address of an account made before addresses were confirmed
 * (opening it signs that account in, as a reset link would let its holder do).
 */
export async function mailAddressConfirmation(
  deps: { db: Db; mailer: Mailer; appUrl: string },
  user: { id: string; email: string },
) {
  const token = randomBytes(32).toString('base64url');
  await insertEmailConfirmation(deps.db, {
    email: user.email,
    userId: user.id,
    tokenHash: hashToken(token),
    expiresAt: new Date(Date.now() + confirmLifetimeMs),
  });
  sendLater(
    deps.mailer,
    {
      to: user.email,
      subject: 'Confirm your address on Fairsheet',
      text:
        `Hello,\n\nOpen this link within 24 hours to confirm that this address is yours. It works once.\n\n` +
        `${deps.appUrl}/confirm-email?token=${token}\n\n` +
        `If you did not ask, ignore this mail.\n`,
    },
    'address confirmation',
  );
}

export interface AuthServiceDeps {
  db: Db;
  hasher: PasswordHasher;
  mailer: Mailer;
  appUrl: string;
}

export function createAuthService({ db, hasher, mailer, appUrl }: AuthServiceDeps) {
  return {
    /**
     * Answers the signed-in user only when the person came from an invitation link sent to
     * this address (the link shows the address reaches them). Otherwise answers null, the same
     * whether or not the address has an account, after the same password hashing: a new
     * address is mailed the link that makes the account, a taken one a note to its owner.
     */
    async register(body: RegisterBody): Promise<User | null> {
      const passwordHash = await hasher.hash(body.password);
      if (body.invitation) {
        const invited = await findInvitationByToken(db, hashToken(body.invitation));
        const pending =
          invited &&
          !invited.acceptedAt &&
          !invited.revokedAt &&
          invited.expiresAt.getTime() > Date.now();
        if (pending && invited.email === body.email) {
          const row = await insertUser(db, {
            email: body.email,
            name: body.name,
            passwordHash,
            emailVerifiedAt: new Date(),
          });
          // Said only to whoever holds a link mailed to this very address.
          if (!row)
            throw conflict(
              'An account with that e-mail already exists. Sign in to accept the invitation.',
              { fields: [{ path: 'email', message: 'Already registered' }] },
            );
          await deletePendingRegistrations(db, row.email);
          return toUser(row);
        }
      }
      const existing = await findUserByEmail(db, body.email);
      if (existing) {
        sendLater(
          mailer,
          {
            to: existing.email,
            subject: 'Someone tried to register with your address',
            text:
              `Hello ${existing.name},\n\nSomeone tried to create a Fairsheet account with this address, ` +
              `which already has one. If it was you, sign in, or reset your password if you have forgotten it:\n\n` +
              `${appUrl}/sign-in\n${appUrl}/reset-password\n\n` +
              `If it was not you, there is nothing to do: your account is unchanged.\n`,
          },
          'registration notice',
        );
        return null;
      }
      const token = randomBytes(32).toString('base64url');
      await insertEmailConfirmation(db, {
        email: body.email,
        name: body.name,
        passwordHash,
        tokenHash: hashToken(token),
        expiresAt: new Date(Date.now() + confirmLifetimeMs),
      });
      // The name is the registrant's own text: it stays out of a mail to an address not yet
      // shown to be theirs.
      sendLater(
        mailer,
        {
          to: body.email,
          subject: 'Finish creating your Fairsheet account',
          text:
            `Hello,\n\nSomeone (we hope you) asked to create a Fairsheet account with this address.\n` +
            `Open this link within 24 hours to finish and sign in. It works once.\n\n` +
            `${appUrl}/confirm-email?token=${token}\n\n` +
            `If it was not you, ignore this mail: no account is made without the link.\n`,
        },
        'address confirmation',
      );
      return null;
    },

    /**
     * Takes a confirmation link: makes the registration's account, or marks an older
     * account's address confirmed. Answers the account, to be signed in.
     */
    async confirmEmail(token: string): Promise<User> {
      const row = await consumeEmailConfirmation(db, hashToken(token));
      if (!row) {
        throw badRequest('That link is not valid any more. Register again for a new one.', {
          fields: [{ path: 'token', message: 'Used, expired or unknown' }],
        });
      }
      if (row.userId) {
        await markEmailVerified(db, row.userId);
        const user = await findUserById(db, row.userId);
        if (!user) throw badRequest('That account no longer exists.');
        return toUser(user);
      }
      const user = await insertUser(db, {
        email: row.email,
        name: row.name ?? row.email,
        passwordHash: row.passwordHash ?? '',
        emailVerifiedAt: new Date(),
      });
      if (!user) {
        throw conflict('That address already has an account. Sign in, or reset the password.', {
          fields: [{ path: 'email', message: 'Already registered' }],
        });
      }
      await deletePendingRegistrations(db, user.email);
      return toUser(user);
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
      sendLater(
        mailer,
        {
          to: row.email,
          subject: 'Reset your Fairsheet password',
          text:
            `Hello ${row.name},\n\nSomeone (we hope you) asked to reset the password of your Fairsheet account.\n` +
            `Open this link within one hour to choose a new one. It works once, and any earlier link stops working.\n\n${link}\n\n` +
            `If you did not ask, ignore this mail: your password stays as it is.\n`,
        },
        'password reset',
      );
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
