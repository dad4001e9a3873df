import {
  diffModels,
  isEmptyDiff,
  movedValues,
  summariseDiff,
  type FairsheetModel,
  type FeaturesResult,
  type ModelDiff,
  type SolveResult,
} from '@shared/engine';
import { promisify } from 'node:util';
import { brotliCompress, constants as zlib, gzip } from 'node:zlib';
import {
  emptyModel,
  type Comparison,
  type HistoryEntry,
  type RevisionDetail,
  type SaveAnswer,
  type SlimSolveResult,
  type SolveVerdict,
  type StoredModel,
} from '@shared/api';
import type { Db } from '../db/client';
import * as repo from '../db/models';
import { conflict, notFound } from '../http/errors';
import { defaultSolvePool, type SolvePool } from '../solve/pool';
import type { ActivityService } from './activity';

/**
 * A save's answer: each value with its stack-up, without the traces and contributors (which grow
 * with chain length and which the browser works out itself).
 */
function slimResult(result: SolveResult): SlimSolveResult {
  const values: SlimSolveResult['values'] = {};
  for (const [name, v] of Object.entries(result.values)) {
    const { from: _from, contributors: _contributors, trace: _trace, ...slim } = v;
    values[name] = slim;
  }
  return { ...result, values };
}

/** The server's verdict on a stored model (status, contradictions, checks, needs), no values. */
function verdictOf(result: SolveResult): SolveVerdict {
  const { values: _values, ...verdict } = result;
  return verdict;
}

/** The body in both encodings browsers ask for; brotli at a quality that takes milliseconds. */
async function compress(body: string) {
  const [gzipped, br] = await Promise.all([
    promisify(gzip)(body),
    promisify(brotliCompress)(body, { params: { [zlib.BROTLI_PARAM_QUALITY]: 5 } }),
  ]);
  return { gzip: gzipped, br };
}

/** GET /model's answer, ready to send in each encoding. */
interface ModelAnswer {
  etag: string;
  body: string;
  gzip: Buffer;
  br: Buffer;
}

/**
 * The current revision as the server reads it: GET /model's answer (`StoredModel` of
 * shared/api) with the whole stored result in place of its verdict.
 */
export type CurrentModel = Omit<StoredModel, 'result'> & {
  result: SolveResult;
  /** The features evaluated with the revision's solve (null: saved before they were stored). */
  features: FeaturesResult | null;
};

/** What one solve job answers for a revision: the model's result and its features. */
export type RevisionSolve = { result: SolveResult; features: FeaturesResult };

/**
 * `solver`: where models are solved (default: the process's pool), never on this thread; its
 * cache makes a revision's solve once, for the save, the history's comparisons and the import.
 */
export function createModelService(
  db: Db,
  activity?: ActivityService,
  solver: SolvePool = defaultSolvePool(),
) {
  /** Writes the first revision of a new project's model, inside the project's transaction. */
  async function initialise(
    tx: repo.DbOrTx,
    projectId: string,
    units: 'in' | 'mm',
    userId: string,
  ) {
    const model = emptyModel(units);
    await repo.insertModel(tx, projectId, model, await solver.revision(model), userId);
    await repo.insertRevision(tx, {
      projectId,
      revision: 0,
      userId,
      summary: 'project started',
      diff: diffModels(model, model),
      model,
    });
  }

  async function current(projectId: string): Promise<CurrentModel> {
    const row = await repo.findModel(db, projectId);
    if (!row) throw notFound('The model');
    return {
      revision: row.revision,
      model: row.model as FairsheetModel,
      result: row.result as SolveResult,
      features: (row.features as FeaturesResult | null) ?? null,
      updatedAt: row.updatedAt.toISOString(),
      updatedBy: row.updatedBy,
    };
  }

  // The serialised answer of each project's current revision. Keyed by the revision read from
  // the database, so another instance's save is never hidden; a small bound keeps memory flat.
  // The promise is kept, so requests arriving while an answer is made share that one.
  const cachedJson = new Map<string, { revision: number; answer: Promise<ModelAnswer> }>();
  const cacheLimit = 200;

  /**
   * The current model as JSON text, gzipped and in brotli, with an ETag, made once per
   * revision. `knownRevision`: the revision the caller has just read (the access check does),
   * to save a query.
   */
  async function currentJson(projectId: string, knownRevision?: number | null) {
    const revision = knownRevision ?? (await repo.findModelRevision(db, projectId));
    if (revision === undefined || revision === null) throw notFound('The model');
    const hit = cachedJson.get(projectId);
    if (hit && hit.revision === revision) return hit.answer;
    const answer = modelAnswer(projectId);
    cachedJson.delete(projectId);
    cachedJson.set(projectId, { revision, answer });
    if (cachedJson.size > cacheLimit) cachedJson.delete(cachedJson.keys().next().value!);
    answer.catch(() => {
      if (cachedJson.get(projectId)?.answer === answer) cachedJson.delete(projectId);
    });
    return answer;
  }

  async function modelAnswer(projectId: string): Promise<ModelAnswer> {
    const stored = await current(projectId);
    // The browser solves the model itself (values, traces, stack-up charts); the answer carries
    // the server's verdict only, which keeps a 2,000-dimension model small.
    const answer: StoredModel = {
      revision: stored.revision,
      model: stored.model,
      result: stored.result && verdictOf(stored.result),
      updatedAt: stored.updatedAt,
      updatedBy: stored.updatedBy,
    };
    const body = JSON.stringify(answer);
    return {
      etag: `"m${stored.revision}-${stored.updatedAt}"`,
      body,
      // Compressed once here rather than per request (off the event loop): a 2,000-dimension
      // answer of ~240 kB is ~25 kB gzipped and ~10 kB in brotli, and compressing it costs
      // milliseconds the busy route should not repeat.
      ...(await compress(body)),
    };
  }

  /**
   * Saves a model based on `baseRevision` in one transaction: refused with 409 (and the current
   * revision and model) when someone saved first; otherwise solved, diffed and written with a
   * history entry. Saving an unchanged model writes nothing and answers the same revision.
   */
  async function save(
    projectId: string,
    userId: string,
    baseRevision: number,
    model: FairsheetModel,
    note?: string,
  ): Promise<SaveAnswer> {
    // Solved before the row lock is taken: a solve waiting for a thread holds no connection.
    const solved = await solver.revision(model);
    return db.transaction((tx) =>
      writeRevision(tx, { projectId, userId, baseRevision, model, solved, note }),
    );
  }

  /**
   * The inside of a save, for a transaction that writes more than the model (a measurement
   * writes its sheet too): locks the model row, refuses with 409 when `baseRevision` is stale,
   * and writes `model` (solved as `solved`) as the next revision with its history and activity
   * rows.
   */
  async function writeRevision(
    tx: repo.Tx,
    args: {
      projectId: string;
      userId: string;
      baseRevision: number;
      model: FairsheetModel;
      solved: RevisionSolve;
      note?: string;
    },
  ): Promise<SaveAnswer> {
    const { projectId, userId, baseRevision, model, solved, note } = args;
    const { result } = solved;
    const locked = await repo.lockModel(tx, projectId);
    if (!locked) throw notFound('The model');
    if (locked.revision !== baseRevision) {
      throw conflict(
        `Someone else saved revision ${locked.revision} after the revision ${baseRevision} you edited.`,
        { currentRevision: locked.revision, model: locked.model },
      );
    }
    const previous = locked.model as FairsheetModel;
    const diff = diffModels(previous, model);
    if (isEmptyDiff(diff) && !note)
      return { revision: locked.revision, result: slimResult(result), summary: 'no change' };
    const revision = locked.revision + 1;
    const summary = note ? `${note} (${summariseDiff(diff)})` : summariseDiff(diff);
    await repo.writeModel(tx, projectId, { revision, model, ...solved, userId });
    await repo.insertRevision(tx, { projectId, revision, userId, summary, diff, model });
    await activity?.record(
      {
        projectId,
        userId,
        kind: 'save',
        summary: `saved revision ${revision}: ${summary}`,
        details: { revision, diff },
      },
      tx,
    );
    return { revision, result: slimResult(result), summary };
  }

  async function history(projectId: string): Promise<HistoryEntry[]> {
    const rows = await repo.listRevisions(db, projectId);
    return rows.map((r) => ({
      revision: r.revision,
      createdAt: r.createdAt.toISOString(),
      summary: r.summary,
      user: r.userId || r.userName ? { id: r.userId ?? '', name: r.userName ?? '' } : null,
    }));
  }

  async function revision(projectId: string, revisionNumber: number): Promise<RevisionDetail> {
    const row = await repo.findRevision(db, projectId, revisionNumber);
    if (!row) throw notFound(`Revision ${revisionNumber}`);
    // Entries recorded before the model had parts and features have no lists for them.
    const diff = row.diff as Omit<ModelDiff, 'parts' | 'features'> & Partial<ModelDiff>;
    return {
      revision: row.revision,
      createdAt: row.createdAt.toISOString(),
      summary: row.summary,
      user: row.userId || row.userName ? { id: row.userId ?? '', name: row.userName ?? '' } : null,
      diff: { ...diff, parts: diff.parts ?? [], features: diff.features ?? [] },
      model: row.model as FairsheetModel,
    };
  }

  /** What changed from one revision to another, and which solved values moved. */
  async function compare(projectId: string, from: number, to: number): Promise<Comparison> {
    const [a, b] = await Promise.all([revision(projectId, from), revision(projectId, to)]);
    const diff = diffModels(a.model, b.model);
    const [before, after] = await Promise.all([solver.solve(a.model), solver.solve(b.model)]);
    const moved = movedValues(before, after);
    return { from, to, diff, moved, summary: summariseDiff(diff, 20) };
  }

  /** Restores an old revision's model as a new revision (history is never rewritten). */
  async function restore(projectId: string, userId: string, baseRevision: number, target: number) {
    const old = await revision(projectId, target);
    return save(projectId, userId, baseRevision, old.model, `restored revision ${target}`);
  }

  return {
    initialise,
    current,
    currentJson,
    save,
    writeRevision,
    history,
    revision,
    compare,
    restore,
    /** A model's result and features in one job off this thread (or remembered). */
    solveRevision: (model: unknown) => solver.revision(model),
  };
}

export type ModelService = ReturnType<typeof createModelService>;
