import { z } from 'zod';
import { modelSchema } from '../engine/model';

export const revisionNumber = z.coerce.number().int().min(0);

/** A save names the revision it was based on; the server refuses it (409) if that is stale. */
export const saveModelBody = z.object({
  revision: revisionNumber,
  model: modelSchema,
  /** Why: shown in the history instead of the automatic summary (e.g. "Imported kestrel.json"). */
  note: z.string().trim().max(300).optional(),
});
export type SaveModelBody = z.input<typeof saveModelBody>;

export const revisionParams = z.object({
  projectId: z.uuid({ message: 'Not a project id' }),
  revision: revisionNumber,
});

export const compareQuery = z.object({ from: revisionNumber, to: revisionNumber });

export const restoreBody = z.object({ revision: revisionNumber });

/** The empty model a new project starts with. */
export function emptyModel(units: 'in' | 'mm') {
  return {
    format: 'fairsheet.model' as const,
    version: 1 as const,
    units,
    dimensions: [],
    relations: [],
  };
}
