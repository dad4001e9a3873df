import type {
  FairsheetModel,
  FairsheetModelInput,
  ModelDiff,
  SolveResult,
  ValueMove,
} from '@shared/engine';
import { request } from './client';

export interface StoredModel {
  revision: number;
  model: FairsheetModel;
  result: SolveResult | null;
  updatedAt: string;
  updatedBy: string | null;
}

export interface SaveAnswer {
  revision: number;
  result: SolveResult;
  summary: string;
}

export interface HistoryEntry {
  revision: number;
  createdAt: string;
  summary: string;
  user: { id: string; name: string } | null;
}

export interface RevisionDetail extends HistoryEntry {
  diff: ModelDiff;
  model: FairsheetModel;
}

export interface Comparison {
  from: number;
  to: number;
  diff: ModelDiff;
  moved: ValueMove[];
  summary: string;
}

const base = (projectId: string) => `/api/projects/${encodeURIComponent(projectId)}`;

export const modelsApi = {
  get: (projectId: string) => request<StoredModel>('GET', `${base(projectId)}/model`),
  save: (projectId: string, revision: number, model: FairsheetModelInput, note?: string) =>
    request<SaveAnswer>('PUT', `${base(projectId)}/model`, { revision, model, note }),
  exportUrl: (projectId: string) => `${base(projectId)}/model/export`,
  history: (projectId: string) =>
    request<{ entries: HistoryEntry[] }>('GET', `${base(projectId)}/history`).then(
      (r) => r.entries,
    ),
  revision: (projectId: string, revision: number) =>
    request<RevisionDetail>('GET', `${base(projectId)}/history/${revision}`),
  compare: (projectId: string, from: number, to: number) =>
    request<Comparison>('GET', `${base(projectId)}/compare?from=${from}&to=${to}`),
  restore: (projectId: string, target: number, revision: number) =>
    request<SaveAnswer>('POST', `${base(projectId)}/history/${target}/restore`, { revision }),
  solve: (
    model: FairsheetModelInput,
    monteCarlo?: { samples: number; seed: number; values?: string[] },
  ) => request<SolveResult>('POST', '/api/solve', { model, monteCarlo }),
};
