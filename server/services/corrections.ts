import type { Correction, CorrectionBody } from '@shared/api';
import type { Db } from '../db/client';
import * as repo from '../db/team';
import type { ActivityService } from './activity';

type CorrectionFields = Required<Omit<CorrectionBody, 'sheetId' | 'dimension'>> & {
  sheetId: string | null;
  dimension: string | null;
};

/** The record of what was wrong on the source sheets: printed on the shop sheet. */
export function createCorrectionService(db: Db, activity: ActivityService) {
  const toCorrection = (
    r: Awaited<ReturnType<typeof repo.listCorrections>>[number],
  ): Correction => ({
    id: r.id,
    sheetId: r.sheetId,
    sheetTitle: r.sheetTitle ?? null,
    dimension: r.dimension,
    wrong: r.wrong,
    corrected: r.corrected,
    reason: r.reason,
    source: r.source as Correction['source'],
    sourceNote: r.sourceNote,
    author: { id: r.userId ?? '', name: r.userName ?? 'a former member' },
    createdAt: r.createdAt.toISOString(),
  });

  return {
    async list(projectId: string): Promise<Correction[]> {
      return (await repo.listCorrections(db, projectId)).map(toCorrection);
    },

    async create(
      projectId: string,
      author: { id: string; name: string },
      body: CorrectionFields,
    ): Promise<Correction> {
      const row = await repo.insertCorrection(db, { projectId, userId: author.id, ...body });
      await activity.record({
        projectId,
        userId: author.id,
        kind: 'correction',
        summary: `corrected ${body.dimension ?? 'the drawing'}: ${body.wrong} → ${body.corrected}`,
        details: { correctionId: row.id },
      });
      return toCorrection({ ...row, userName: author.name, sheetTitle: null });
    },
  };
}

export type CorrectionService = ReturnType<typeof createCorrectionService>;
