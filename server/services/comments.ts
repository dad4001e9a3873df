import type { Comment, CommentBody } from '@shared/api';
import type { Db } from '../db/client';
import { listMembers } from '../db/projects';
import * as repo from '../db/team';
import type { Mailer } from '../mail/mailer';
import type { ActivityService } from './activity';

/** `@jo@example.com` or `@JoPenrose` (a member's name without spaces), case-insensitive. */
export function findMentions(
  body: string,
  members: { userId: string; name: string; email: string }[],
) {
  const words = [...body.matchAll(/@([\w.+-]+@[\w-]+(?:\.[\w-]+)+|[\p{L}\w.-]+)/gu)].map((m) =>
    m[1].toLowerCase().replace(/[.,;:!?]+$/, ''),
  );
  return members.filter((m) =>
    words.some(
      (w) =>
        w === m.email.toLowerCase() ||
        w === m.name.replace(/\s+/g, '').toLowerCase() ||
        w === m.name.split(/\s+/)[0].toLowerCase(),
    ),
  );
}

export function createCommentService(deps: {
  db: Db;
  mailer: Mailer;
  appUrl: string;
  activity: ActivityService;
}) {
  const { db, mailer, appUrl, activity } = deps;
  return {
    async list(
      projectId: string,
      filter: { targetKind?: string; targetId?: string },
    ): Promise<Comment[]> {
      const rows = await repo.listComments(db, projectId, filter);
      return rows.map((r) => ({
        id: r.id,
        targetKind: r.targetKind,
        targetId: r.targetId,
        body: r.body,
        mentions: r.mentions as string[],
        author: { id: r.userId ?? '', name: r.userName ?? 'a former member' },
        createdAt: r.createdAt.toISOString(),
      }));
    },

    /** Saves a comment and mails every member it @mentions (not the author). */
    async create(
      project: { id: string; name: string },
      author: { id: string; name: string },
      body: CommentBody & { targetKind: Comment['targetKind'] },
    ): Promise<Comment> {
      const members = await listMembers(db, project.id);
      const mentioned = findMentions(body.body, members).filter((m) => m.userId !== author.id);
      const row = await repo.insertComment(db, {
        projectId: project.id,
        targetKind: body.targetKind,
        targetId: body.targetId,
        userId: author.id,
        body: body.body,
        mentions: mentioned.map((m) => m.name),
      });
      for (const m of mentioned) {
        mailer
          .send({
            to: m.email,
            subject: `${author.name} mentioned you on “${project.name}”`,
            text: `${author.name} wrote on ${body.targetKind} ${body.targetId}:\n\n${body.body}\n\n${appUrl}/projects/${project.id}/model\n`,
          })
          .catch((err: Error) => console.error('[mail] mention not sent:', err.message));
      }
      await activity.record({
        projectId: project.id,
        userId: author.id,
        kind: 'comment',
        summary: `commented on ${body.targetKind} ${body.targetId}`,
        details: { commentId: row.id, mentions: mentioned.map((m) => m.name) },
      });
      return {
        id: row.id,
        targetKind: row.targetKind,
        targetId: row.targetId,
        body: row.body,
        mentions: mentioned.map((m) => m.name),
        author: { id: author.id, name: author.name },
        createdAt: row.createdAt.toISOString(),
      };
    },
  };
}

export type CommentService = ReturnType<typeof createCommentService>;
