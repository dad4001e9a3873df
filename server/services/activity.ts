import type { ActivityEntry } from '@shared/api';
import type { Db } from '../db/client';
import type { DbOrTx } from '../db/models';
import { insertActivity, listActivity } from '../db/team';

export type ActivityKind = ActivityEntry['kind'];

/** The project's time line. Services record as they act; inside their transaction when they have one. */
export function createActivityService(db: Db) {
  return {
    record(
      entry: {
        projectId: string;
        userId: string | null;
        kind: ActivityKind;
        summary: string;
        details?: unknown;
      },
      tx: DbOrTx = db,
    ) {
      return insertActivity(tx, entry);
    },

    async list(
      projectId: string,
      kind: ActivityKind | undefined,
      limit: number,
    ): Promise<ActivityEntry[]> {
      const rows = await listActivity(db, projectId, kind, limit);
      return rows.map((r) => ({
        id: String(r.id),
        kind: r.kind as ActivityKind,
        summary: r.summary,
        details: r.details,
        // An entry imported from a bundle has no account, only the name recorded there.
        user: r.userId || r.userName ? { id: r.userId ?? '', name: r.userName ?? '' } : null,
        createdAt: r.createdAt.toISOString(),
      }));
    },
  };
}

export type ActivityService = ReturnType<typeof createActivityService>;
