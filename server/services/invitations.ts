import { createHash, randomBytes } from 'node:crypto';
import type { Invitation, InvitationAccepted, InvitationPreview, ProjectRole } from '@shared/api';
import type { Db } from '../db/client';
import { listMembers, upsertMembership } from '../db/projects';
import * as repo from '../db/team';
import { findUserById } from '../db/users';
import { AppError, conflict, forbidden, notFound } from '../http/errors';
import type { Mailer } from '../mail/mailer';
import type { ActivityService } from './activity';
import { mailAddressConfirmation } from './auth';

const lifetimeMs = 7 * 24 * 3600_000;
const hashToken = (token: string) => createHash('sha256').update(token).digest('hex');
const gone = (message: string) => new AppError('gone', message, 410);

type Row = NonNullable<Awaited<ReturnType<typeof repo.findInvitation>>>;

function stateOf(row: Pick<Row, 'acceptedAt' | 'revokedAt' | 'expiresAt'>): Invitation['state'] {
  if (row.acceptedAt) return 'accepted';
  if (row.revokedAt) return 'revoked';
  return row.expiresAt.getTime() <= Date.now() ? 'expired' : 'pending';
}

function toInvitation(row: Row): Invitation {
  return {
    id: row.id,
    email: row.email,
    role: row.role,
    state: stateOf(row),
    invitedBy: row.invitedBy ?? '',
    createdAt: row.createdAt.toISOString(),
    expiresAt: row.expiresAt.toISOString(),
    lastSentAt: row.lastSentAt.toISOString(),
  };
}

const roleWords: Record<ProjectRole, string> = {
  owner: 'an owner',
  editor: 'an editor (you can change the dimensions and relations)',
  checker: 'a checker (you check derived values before metal is cut)',
  viewer: 'a viewer (you can read everything)',
};

export function createInvitationService(deps: {
  db: Db;
  mailer: Mailer;
  appUrl: string;
  activity: ActivityService;
}) {
  const { db, mailer, appUrl, activity } = deps;

  async function mail(
    to: string,
    token: string,
    projectName: string,
    inviter: string,
    role: ProjectRole,
  ) {
    const link = `${appUrl}/invitations/${token}`;
    await mailer.send({
      to,
      // Our words only: a subject the inviter could write would let anyone send phishing
      // under our name. Their name and the project's stay in the body, quoted.
      subject: 'An invitation to a project on Fairsheet',
      text:
        `${inviter} has invited you to the Fairsheet project “${projectName}” as ${roleWords[role]}.\n\n` +
        `Open this link to sign in or create an account and join. It works once, for 7 days.\n\n${link}\n\n` +
        `If you were not expecting this, ignore the mail.\n`,
    });
  }

  return {
    async create(
      project: { id: string; name: string },
      inviter: { id: string; name: string },
      email: string,
      role: ProjectRole,
    ) {
      const members = await listMembers(db, project.id);
      if (members.some((m) => m.email === email)) {
        throw conflict(`${email} is already a member of this project.`, {
          fields: [{ path: 'email', message: 'Already a member' }],
        });
      }
      const token = randomBytes(32).toString('base64url');
      const row = await repo.insertInvitation(db, {
        projectId: project.id,
        email,
        role,
        tokenHash: hashToken(token),
        invitedBy: inviter.id,
        expiresAt: new Date(Date.now() + lifetimeMs),
      });
      await mail(email, token, project.name, inviter.name, role);
      await activity.record({
        projectId: project.id,
        userId: inviter.id,
        kind: 'invitation',
        summary: `invited ${email} as ${role}`,
      });
      return toInvitation({ ...row, invitedBy: inviter.name });
    },

    /** The address a project's invitation was sent to; undefined when there is none. */
    async addressOf(projectId: string, id: string): Promise<string | undefined> {
      return (await repo.findInvitation(db, projectId, id))?.email;
    },

    async list(projectId: string): Promise<Invitation[]> {
      return (await repo.listInvitations(db, projectId)).map(toInvitation);
    },

    async revoke(projectId: string, id: string, userId: string) {
      const row = await repo.findInvitation(db, projectId, id);
      if (!row || !(await repo.revokeInvitation(db, projectId, id)))
        throw notFound('That pending invitation');
      await activity.record({
        projectId,
        userId,
        kind: 'invitation',
        summary: `revoked the invitation of ${row.email}`,
      });
    },

    /** A new link (the old one stops working) and a fresh 7 days. */
    async resend(
      project: { id: string; name: string },
      id: string,
      user: { id: string; name: string },
    ) {
      const row = await repo.findInvitation(db, project.id, id);
      if (!row || stateOf(row) === 'accepted' || stateOf(row) === 'revoked')
        throw notFound('That pending invitation');
      const token = randomBytes(32).toString('base64url');
      const expiresAt = new Date(Date.now() + lifetimeMs);
      await repo.renewInvitation(db, id, hashToken(token), expiresAt);
      await mail(row.email, token, project.name, user.name, row.role);
      await activity.record({
        projectId: project.id,
        userId: user.id,
        kind: 'invitation',
        summary: `sent the invitation of ${row.email} again`,
      });
      return toInvitation({ ...row, expiresAt, lastSentAt: new Date() });
    },

    async preview(token: string): Promise<InvitationPreview> {
      const row = await repo.findInvitationByToken(db, hashToken(token));
      if (!row) throw notFound('That invitation');
      return {
        projectName: row.projectName,
        invitedBy: row.invitedBy ?? '',
        email: row.email,
        role: row.role,
        state: stateOf(row),
        expiresAt: row.expiresAt.toISOString(),
      };
    },

    /**
     * Adds the signed-in person to the project when their account's confirmed address is the
     * one invited (403 otherwise, and the invitation stays for its owner); a used, revoked or
     * expired link answers 410.
     */
    async accept(token: string, user: { id: string; name: string }): Promise<InvitationAccepted> {
      const row = await repo.findInvitationByToken(db, hashToken(token));
      if (!row) throw notFound('That invitation');
      const state = stateOf(row);
      if (state === 'accepted')
        throw gone(
          'This invitation has already been used. Ask the project owner for a new one if you need it.',
        );
      if (state === 'revoked') throw gone('This invitation was withdrawn by the project owner.');
      if (state === 'expired')
        throw gone(
          'This invitation has expired (they last 7 days). Ask the project owner to send it again.',
        );
      const account = await findUserById(db, user.id);
      if (!account || account.email !== row.email)
        throw forbidden(
          `This invitation is for ${row.email}. Sign in with that address (or create an account with it) to accept.`,
        );
      if (!account.emailVerifiedAt) {
        await mailAddressConfirmation({ db, mailer, appUrl }, account);
        throw forbidden(
          `Confirm that ${row.email} is yours first: we have mailed a link to it. Open the link, then accept again.`,
        );
      }
      return db.transaction(async (tx) => {
        if (!(await repo.acceptInvitation(tx, row.id, user.id)))
          throw gone('This invitation has just been used or withdrawn.');
        const existing = await repo.findMemberRole(tx, row.projectId, user.id);
        // Joining never lowers a role someone already has.
        if (!existing) await upsertMembership(tx, row.projectId, user.id, row.role);
        await activity.record(
          {
            projectId: row.projectId,
            userId: user.id,
            kind: 'member',
            summary: `${user.name} joined as ${existing ?? row.role}`,
          },
          tx,
        );
        return { projectId: row.projectId, role: existing ?? row.role };
      });
    },
  };
}

export type InvitationService = ReturnType<typeof createInvitationService>;
