import type { ProjectRole } from '@shared/api';
import type { Db } from '../db/client';
import * as repo from '../db/team';
import { conflict, forbidden, notFound } from '../http/errors';
import type { ActivityService } from './activity';

/** Role changes and departures; a project always keeps at least one owner. */
export function createMemberService(db: Db, activity: ActivityService) {
  return {
    async changeRole(projectId: string, actorId: string, userId: string, role: ProjectRole) {
      await db.transaction(async (tx) => {
        await repo.lockProject(tx, projectId);
        const current = await repo.findMemberRole(tx, projectId, userId);
        if (!current) throw notFound('That member');
        if (
          current === 'owner' &&
          role !== 'owner' &&
          (await repo.countOwners(tx, projectId)) <= 1
        ) {
          throw conflict('The last owner cannot be demoted. Make someone else an owner first.');
        }
        await repo.setMemberRole(tx, projectId, userId, role);
        await activity.record(
          {
            projectId,
            userId: actorId,
            kind: 'member',
            summary: `changed a role: ${current} → ${role}`,
            details: { userId },
          },
          tx,
        );
      });
    },

    /** Owners remove anyone; anyone may leave. */
    async remove(projectId: string, actor: { id: string; role: ProjectRole }, userId: string) {
      if (actor.id !== userId && actor.role !== 'owner')
        throw forbidden('Only an owner can remove other members.');
      await db.transaction(async (tx) => {
        await repo.lockProject(tx, projectId);
        const current = await repo.findMemberRole(tx, projectId, userId);
        if (!current) throw notFound('That member');
        if (current === 'owner' && (await repo.countOwners(tx, projectId)) <= 1) {
          throw conflict(
            actor.id === userId
              ? 'You are the last owner: make someone else an owner before you leave.'
              : 'The last owner cannot be removed.',
          );
        }
        await repo.deleteMember(tx, projectId, userId);
        await activity.record(
          {
            projectId,
            userId: actor.id,
            kind: 'member',
            summary: actor.id === userId ? 'left the project' : 'removed a member',
            details: { userId },
          },
          tx,
        );
      });
    },
  };
}

export type MemberService = ReturnType<typeof createMemberService>;
