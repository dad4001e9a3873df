import { afterEach, describe, expect, it, vi } from 'vitest';
import { project, storedModel } from '@shared/api';
import { AnswerMismatchError, ApiError, noAnswer, request } from '@/api/client';

/** fetch answering one JSON body (or none, for 204) with the given status. */
function answer(status: number, body?: unknown) {
  const fetch = vi.fn(
    async () =>
      new Response(body === undefined ? null : JSON.stringify(body), {
        status,
        headers: { 'Content-Type': 'application/json' },
      }),
  );
  vi.stubGlobal('fetch', fetch);
  return fetch;
}

afterEach(() => {
  vi.unstubAllGlobals();
});

const aProject = {
  id: '6f1c2a57-3d4e-4b8f-9a0b-1c2d3e4f5a6b',
  name: 'Kestrel',
  displayUnit: 'in',
  modelScale: null,
  role: 'editor',
  createdAt: '2026-01-02T03:04:05.000Z',
  updatedAt: '2026-01-02T03:04:05.000Z',
};

describe('request(): the answer typed and, in tests, checked by its schema', () => {
  it('answers the server’s own object when it matches the schema', async () => {
    answer(200, aProject);
    const got = await request('GET', '/api/projects/p', project);
    expect(got).toEqual(aProject);
    expect(got.role).toBe('editor');
  });

  it('throws AnswerMismatchError naming the request and the field when the answer drifts', async () => {
    answer(200, { ...aProject, role: 'admin', name: undefined });
    const err = await request('GET', '/api/projects/p', project).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(AnswerMismatchError);
    const message = (err as Error).message;
    expect(message).toContain('GET /api/projects/p');
    expect(message).toMatch(/at role/);
    expect(message).toMatch(/at name/);
  });

  it('checks a nested answer: a stored model whose verdict lost its status', async () => {
    answer(200, {
      revision: 3,
      model: { format: 'fairsheet.model', version: 1, units: 'in', dimensions: [] },
      result: {
        units: 'in',
        contradictions: [],
        checks: [],
        undetermined: [],
        needs: 0,
        openGroups: [],
        errors: [],
      },
      updatedAt: '2026-01-02T03:04:05.000Z',
      updatedBy: null,
    });
    const err = await request('GET', '/api/projects/p/model', storedModel).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(AnswerMismatchError);
    expect((err as Error).message).toMatch(/at result\.status/);
  });

  it('answers undefined to a 204 named noAnswer, and refuses a body where none was expected', async () => {
    answer(204);
    await expect(request('DELETE', '/api/projects/p', noAnswer)).resolves.toBeUndefined();
    answer(200, aProject);
    await expect(request('DELETE', '/api/projects/p', noAnswer)).rejects.toBeInstanceOf(
      AnswerMismatchError,
    );
  });

  it('turns an error body into ApiError before any schema is read', async () => {
    answer(409, {
      error: { code: 'conflict', message: 'Someone saved first.', details: { currentRevision: 4 } },
    });
    const err = await request('PUT', '/api/projects/p/model', project, {}).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(ApiError);
    expect(err).toMatchObject({ status: 409, code: 'conflict', details: { currentRevision: 4 } });
  });

  it('sends the CSRF header and JSON body on a change', async () => {
    const fetch = answer(200, aProject);
    await request('PATCH', '/api/projects/p', project, { name: 'Kestrel' });
    const [, init] = fetch.mock.calls[0] as unknown as [string, RequestInit];
    expect(init.body).toBe(JSON.stringify({ name: 'Kestrel' }));
    expect(init.headers).toHaveProperty('X-CSRF-Token');
  });
});
