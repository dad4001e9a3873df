import {
  comparison,
  historyList,
  revisionDetail,
  saveAnswer,
  solveResult,
  storedModel,
} from '@shared/api';
import type { FairsheetModelInput } from '@shared/engine';
import { request } from './client';

export type {
  Comparison,
  HistoryEntry,
  RevisionDetail,
  SaveAnswer,
  StoredModel,
} from '@shared/api';

const base = (projectId: string) => `/api/projects/${encodeURIComponent(projectId)}`;

export const modelsApi = {
  get: (projectId: string) => request('GET', `${base(projectId)}/model`, storedModel),
  save: (projectId: string, revision: number, model: FairsheetModelInput, note?: string) =>
    request('PUT', `${base(projectId)}/model`, saveAnswer, { revision, model, note }),
  exportUrl: (projectId: string) => `${base(projectId)}/model/export`,
  history: (projectId: string) =>
    request('GET', `${base(projectId)}/history`, historyList).then((r) => r.entries),
  revision: (projectId: string, revision: number) =>
    request('GET', `${base(projectId)}/history/${revision}`, revisionDetail),
  compare: (projectId: string, from: number, to: number) =>
    request('GET', `${base(projectId)}/compare?from=${from}&to=${to}`, comparison),
  restore: (projectId: string, target: number, revision: number) =>
    request('POST', `${base(projectId)}/history/${target}/restore`, saveAnswer, { revision }),
  solve: (
    model: FairsheetModelInput,
    monteCarlo?: { samples: number; seed: number; values?: string[] },
  ) => request('POST', '/api/solve', solveResult, { model, monteCarlo }),
};
