import { createHash } from 'node:crypto';
import { lengthNumber, upstreamText, type SolveResult } from '@shared/engine';
import type { Check, CheckList } from '@shared/api';
import type { Db } from '../db/client';
import * as repo from '../db/team';
import { badRequest, notFound } from '../http/errors';
import type { ActivityService } from './activity';
import type { CurrentModel, ModelService } from './models';

const fingerprintOf = (text: string) => createHash('sha256').update(text).digest('hex');

/**
 * Second-person checks. A check records the value and a fingerprint of everything upstream of
 * it; it is `current` while the saved model gives the same fingerprint, `void` once anything
 * upstream changed ("needs re-check"), without anyone having to remember.
 */
export function createCheckService(db: Db, models: ModelService, activity: ActivityService) {
  /** `known`: the stored model the caller has read already (the shop sheet shows its positions). */
  async function list(projectId: string, known?: CurrentModel): Promise<CheckList> {
    const [rows, stored] = await Promise.all([
      repo.listChecks(db, projectId),
      known ?? models.current(projectId),
    ]);
    const result = stored.result as SolveResult;
    const checks: Check[] = rows.map((r) => {
      const text = upstreamText(stored.model, result, r.dimension);
      return {
        dimension: r.dimension,
        state: text !== null && fingerprintOf(text) === r.fingerprint ? 'current' : 'void',
        value: r.value,
        valueNow: result.values[r.dimension]?.value ?? null,
        checkedBy: { id: r.userId ?? '', name: r.userName ?? 'a former member' },
        checkedAt: r.createdAt.toISOString(),
        revision: r.revision,
      };
    });
    const derived = Object.values(result.values).filter(
      (v) => v.kind === 'derived' && v.value !== null,
    ).length;
    const current = checks.filter((c) => c.state === 'current').length;
    return { checks, summary: { derived, checked: current, void: checks.length - current } };
  }

  return {
    list,

    async create(
      projectId: string,
      user: { id: string; name: string },
      dimension: string,
    ): Promise<Check> {
      const stored = await models.current(projectId);
      const v = stored.result.values[dimension];
      if (!v) throw notFound(`The dimension “${dimension}”`);
      if (v.kind !== 'derived')
        throw badRequest('Only derived values are checked; given figures come from the drawing.');
      const text = upstreamText(stored.model, stored.result, dimension);
      if (text === null || v.value === null)
        throw badRequest(`“${dimension}” is not solved yet, so there is nothing to check.`);
      await repo.upsertCheck(db, {
        projectId,
        dimension,
        userId: user.id,
        value: v.value,
        fingerprint: fingerprintOf(text),
        revision: stored.revision,
      });
      await activity.record({
        projectId,
        userId: user.id,
        kind: 'check',
        summary: `checked ${dimension} = ${lengthNumber(v.value, stored.model.units)}`,
        details: { dimension, revision: stored.revision },
      });
      return (await list(projectId)).checks.find((c) => c.dimension === dimension)!;
    },

    async remove(projectId: string, userId: string, dimension: string) {
      if (!(await repo.deleteCheck(db, projectId, dimension)))
        throw notFound(`A check of “${dimension}”`);
      await activity.record({
        projectId,
        userId,
        kind: 'uncheck',
        summary: `withdrew the check of ${dimension}`,
        details: { dimension },
      });
    },
  };
}

export type CheckService = ReturnType<typeof createCheckService>;
