import type { Comment, CommentBody } from '@shared/api';
import type { Db } from '../db/client';
import { listMembers } from '../db/projects';
import { findSheet } from '../db/sheets';
import * as repo from '../db/team';
import type { Mailer } from '../mail/mailer';
import type { ActivityService } from './activity';

/** `@jo@example.com` or `@JoPenrose` (a member's name without spaces), case-insensitive. */
export function findMentions(
  body: string,
  members: { userId: string; name: string; email: string }[],
) {
  // The group is not optional: every match has it.
  const words = [...body.matchAll(/@([\w.+-]+@[\w-]+(?:\.[\w-]+)+|[\p{L}\w.-]+)/gu)].map((m) =>
    m[1]!.toLowerCase().replace(/[.,;:!?]+$/, ''),
  );
  return members.filter((m) =>
    words.some(
      (w) =>
        w === m.email.toLowerCase() ||
        w === m.name.replace(/\s+/g, '').toLowerCase() ||
        // split answers at least one piece.
        w === m.name.split(/\s+/)[0]!.toLowerCase(),
    ),
  );
}

/**
 * Where a comment sits, in words and as a link the client opens at that item: a dimension or a
 * relation on the model page (`?select=` / `?relation=`), a pin or a sheet on its sheet page
 * (`?pin=` opens the pin's comments, `?tab=comments` the sheet's).
 */
async function placeOf(
  db: Db,
  projectId: string,
  target: { targetKind: Comment['targetKind']; targetId: string },
): Promise<{ words: string; path: string }> {
  const base = `/projects/${projectId}`;
  const q = encodeURIComponent;
  switch (target.targetKind) {
    case 'dimension':
      return {
        words: `the dimension ${target.targetId}`,
        path: `${base}/model?select=${q(target.targetId)}`,
      };
    case 'relation':
      return {
        words: `the relation ${target.targetId}`,
        path: `${base}/model?relation=${q(target.targetId)}`,
      };
    case 'pin':
    case 'sheet': {
      // split answers at least one piece: the sheet's id, then a pin's.
      const [sheetId, pinId] = target.targetId.split(':') as [string, ...string[]];
      const sheet = await findSheet(db, projectId, sheetId).catch(() => undefined);
      if (!sheet) return { words: 'a sheet of the project', path: `${base}/sheets` };
      const title = `the sheet “${sheet.title}”`;
      if (target.targetKind === 'sheet')
        return { words: title, path: `${base}/sheets/${sheet.id}?tab=comments` };
      const pins = (sheet.pins ?? []) as { id: string; label?: string }[];
      const label = pins.find((p) => p.id === pinId)?.label;
      return {
        words: `${label ? `the pin “${label}”` : 'a pin'} on ${title}`,
        path: `${base}/sheets/${sheet.id}?pin=${q(pinId ?? '')}`,
      };
    }
  }
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
      const place = await placeOf(db, project.id, body);
      for (const m of mentioned) {
        mailer
          .send({
            to: m.email,
            subject: `${author.name} mentioned you on “${project.name}”`,
            text: `${author.name} wrote on ${place.words}:\n\n${body.body}\n\nOpen it: ${appUrl}${place.path}\n`,
          })
          .catch((err: Error) => console.error('[mail] mention not sent:', err.message));
      }
      await activity.record({
        projectId: project.id,
        userId: author.id,
        kind: 'comment',
        summary: `commented on ${place.words}`,
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
