import {
  diffModels,
  isEmptyDiff,
  movedValues,
  solveModel,
  summariseDiff,
  type FairsheetModel,
  type SolveResult,
} from '@shared/engine';
import { gzipSync } from 'node:zlib';
import { emptyModel } from '@shared/api';
import type { Db } from '../db/client';
import * as repo from '../db/models';
import { conflict, notFound } from '../http/errors';
import type { ActivityService } from './activity';

/** Server solves have a time cap so one pathological model cannot hold a request. */
const solveOptions = { timeLimitMs: 2000 };

/** A result without the per-value traces and contributors (which grow with chain length). */
function slimResult(result: SolveResult) {
  const values: Record<
    string,
    Pick<SolveResult['values'][string], 'value' | 'worstCase' | 'rss' | 'kind' | 'quantity'>
  > = {};
  for (const [name, v] of Object.entries(result.values)) {
    values[name] = {
      value: v.value,
      worstCase: v.worstCase,
      rss: v.rss,
      kind: v.kind,
      quantity: v.quantity,
    };
  }
  return { ...result, values };
}

export interface StoredModel {
  revision: number;
  model: FairsheetModel;
  result: SolveResult;
  updatedAt: string;
  updatedBy: string | null;
}

export function createModelService(db: Db, activity?: ActivityService) {
  /** Writes the first revision of a new project's model, inside the project's transaction. */
  async function initialise(
    tx: repo.DbOrTx,
    projectId: string,
    units: 'in' | 'mm',
    userId: string,
  ) {
    const model = emptyModel(units);
    await repo.insertModel(tx, projectId, model, solveModel(model, solveOptions), userId);
    await repo.insertRevision(tx, {
      projectId,
      revision: 0,
      userId,
      summary: 'project started',
      diff: diffModels(model, model),
      model,
    });
  }

  async function current(projectId: string): Promise<StoredModel> {
    const row = await repo.findModel(db, projectId);
    if (!row) throw notFound('The model');
    return {
      revision: row.revision,
      model: row.model as FairsheetModel,
      result: row.result as SolveResult,
      updatedAt: row.updatedAt.toISOString(),
      updatedBy: row.updatedBy,
    };
  }

  /**
   * Saves a model based on `baseRevision` in one transaction: refused with 409 (and the current
   * revision and model) when someone saved first; otherwise solved, diffed and written with a
   * history entry. Saving an unchanged model writes nothing and answers the same revision.
   */
  // The serialised answer of each project's current revision. Keyed by the revision read from
  // the database, so another instance's save is never hidden; a small bound keeps memory flat.
  const cachedJson = new Map<
    string,
    { revision: number; etag: string; body: string; gzipped: Buffer }
  >();
  const cacheLimit = 200;

  /** The current model as JSON text (and gzipped) with an ETag, serialised once per revision. */
  async function currentJson(projectId: string) {
    const revision = await repo.findModelRevision(db, projectId);
    if (revision === undefined) throw notFound('The model');
    const hit = cachedJson.get(projectId);
    if (hit && hit.revision === revision) return hit;
    const stored = await current(projectId);
    // The browser solves the model itself (traces, contributors, stack-up charts); the answer
    // carries the server's verdict and values only, which keeps a 2,000-dimension model small.
    const body = JSON.stringify({ ...stored, result: stored.result && slimResult(stored.result) });
    const entry = {
      revision: stored.revision,
      etag: `"m${stored.revision}-${stored.updatedAt}"`,
      body,
      // Compressed once here rather than per request: a 2,000-dimension answer of ~430 kB is
      // ~10× smaller, and compressing it costs milliseconds the busy route should not repeat.
      gzipped: gzipSync(body),
    };
    cachedJson.delete(projectId);
    cachedJson.set(projectId, entry);
    if (cachedJson.size > cacheLimit) cachedJson.delete(cachedJson.keys().next().value!);
    return entry;
  }

  async function save(
    projectId: string,
    userId: string,
    baseRevision: number,
    model: FairsheetModel,
    note?: string,
  ): Promise<{ revision: number; result: SolveResult; summary: string }> {
    return db.transaction(async (tx) => {
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
      const result = solveModel(model, solveOptions);
      if (isEmptyDiff(diff) && !note)
        return { revision: locked.revision, result, summary: 'no change' };
      const revision = locked.revision + 1;
      const summary = note ? `${note} (${summariseDiff(diff)})` : summariseDiff(diff);
      await repo.writeModel(tx, projectId, { revision, model, result, userId });
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
      return { revision, result, summary };
    });
  }

  async function history(projectId: string) {
    const rows = await repo.listRevisions(db, projectId);
    return rows.map((r) => ({
      revision: r.revision,
      createdAt: r.createdAt.toISOString(),
      summary: r.summary,
      user: r.userId ? { id: r.userId, name: r.userName ?? '' } : null,
    }));
  }

  async function revision(projectId: string, revisionNumber: number) {
    const row = await repo.findRevision(db, projectId, revisionNumber);
    if (!row) throw notFound(`Revision ${revisionNumber}`);
    return {
      revision: row.revision,
      createdAt: row.createdAt.toISOString(),
      summary: row.summary,
      user: row.userId ? { id: row.userId, name: row.userName ?? '' } : null,
      diff: row.diff,
      model: row.model as FairsheetModel,
    };
  }

  /** What changed from one revision to another, and which solved values moved. */
  async function compare(projectId: string, from: number, to: number) {
    const [a, b] = await Promise.all([revision(projectId, from), revision(projectId, to)]);
    const diff = diffModels(a.model, b.model);
    const moved = movedValues(solveModel(a.model, solveOptions), solveModel(b.model, solveOptions));
    return { from, to, diff, moved, summary: summariseDiff(diff, 20) };
  }

  /** Restores an old revision's model as a new revision (history is never rewritten). */
  async function restore(projectId: string, userId: string, baseRevision: number, target: number) {
    const old = await revision(projectId, target);
    return save(projectId, userId, baseRevision, old.model, `restored revision ${target}`);
  }

  return { initialise, current, currentJson, save, history, revision, compare, restore };
}

export type ModelService = ReturnType<typeof createModelService>;
