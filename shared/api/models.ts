import { z } from 'zod';
import type { Assert, Same } from './agree';
import type { ModelDiff, ValueMove } from '../engine/diff';
import { modelSchema, type FairsheetModelInput } from '../engine/model';
import { slimSolveResult, solveVerdict } from './solve-result';

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

// Answers. The model is checked with the model format itself; the diff's items with the format
// they were saved in (a history entry's item is never read again by the model's rules).

const isObject = (v: unknown) => typeof v === 'object' && v !== null && !Array.isArray(v);
type ModelInputList<K extends 'dimensions' | 'relations' | 'parts' | 'features'> = NonNullable<
  FairsheetModelInput[K]
>[number];

// `from` or `to` is left out of the JSON when the field was added or removed (it was undefined).
const fieldChange = z.object({
  field: z.string(),
  from: z.unknown().default(undefined),
  to: z.unknown().default(undefined),
});

function itemChange<T>() {
  const item = z.custom<T>(isObject, { message: 'Expected an item of the model' });
  return z.object({
    key: z.string(),
    change: z.enum(['added', 'removed', 'changed']),
    before: item.optional(),
    after: item.optional(),
    fields: z.array(fieldChange),
  });
}

/** What changed between two models (`shared/engine/diff.ts` `ModelDiff`). */
export const modelDiff = z.object({
  units: z.object({ from: z.string(), to: z.string() }).optional(),
  defaults: z
    .object({
      from: z.custom<FairsheetModelInput['defaults']>((v) => v === undefined || isObject(v)),
      to: z.custom<FairsheetModelInput['defaults']>((v) => v === undefined || isObject(v)),
    })
    .optional(),
  dimensions: z.array(itemChange<ModelInputList<'dimensions'>>()),
  relations: z.array(itemChange<ModelInputList<'relations'>>()),
  parts: z.array(itemChange<ModelInputList<'parts'>>()),
  features: z.array(itemChange<ModelInputList<'features'>>()),
});

export const valueMove = z.object({
  name: z.string(),
  from: z.number().nullable(),
  to: z.number().nullable(),
  delta: z.number().nullable(),
});

/** GET /model: the current revision and the server's verdict on it (the browser solves for values). */
export const storedModel = z.object({
  revision: z.number().int().nonnegative(),
  model: modelSchema,
  result: solveVerdict.nullable(),
  updatedAt: z.string(),
  updatedBy: z.string().nullable(),
});
export type StoredModel = z.infer<typeof storedModel>;

/** PUT /model and a restore: the revision written (the same one when nothing changed). */
export const saveAnswer = z.object({
  revision: z.number().int().nonnegative(),
  result: slimSolveResult,
  summary: z.string(),
});
export type SaveAnswer = z.infer<typeof saveAnswer>;

export const historyEntry = z.object({
  revision: z.number().int().nonnegative(),
  createdAt: z.string(),
  summary: z.string(),
  user: z.object({ id: z.string(), name: z.string() }).nullable(),
});
export type HistoryEntry = z.infer<typeof historyEntry>;

export const historyList = z.object({ entries: z.array(historyEntry) });

/** GET /history/:revision: the entry with what it changed and the model it saved. */
export const revisionDetail = historyEntry.extend({ diff: modelDiff, model: modelSchema });
export type RevisionDetail = z.infer<typeof revisionDetail>;

/** GET /compare: what changed from one revision to another, and which solved values moved. */
export const comparison = z.object({
  from: z.number().int().nonnegative(),
  to: z.number().int().nonnegative(),
  diff: modelDiff,
  moved: z.array(valueMove),
  summary: z.string(),
});
export type Comparison = z.infer<typeof comparison>;

// The engine's own types and these schemas say the same (see agree.ts).
type _Agree = [
  Assert<Same<z.infer<typeof modelDiff>, ModelDiff>>,
  Assert<Same<z.infer<typeof valueMove>, ValueMove>>,
];
