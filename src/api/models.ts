import type {
  FairsheetModel,
  FairsheetModelInput,
  ModelDiff,
  SolveResult,
  ValueMove,
  ValueResult,
} from '@shared/engine';
import { request } from './client';

export interface StoredModel {
  revision: number;
  model: FairsheetModel;
  /** The server's verdict on the stored model; the browser solves for the values itself. */
  result: Omit<SolveResult, 'values'> | null;
  updatedAt: string;
  updatedBy: string | null;
}

export interface SaveAnswer {
  revision: number;
  /** The server's solve of the saved model: each value with its stack-up, without traces. */
  result: Omit<SolveResult, 'values'> & {
    values: Record<string, Omit<ValueResult, 'from' | 'contributors' | 'trace'>>;
  };
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
