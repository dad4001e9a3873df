import { z } from 'zod';
import { errorBody, type ErrorCode } from '@shared/api';

/** An error answered by the API, with its code and details (e.g. `details.fields`). */
export class ApiError extends Error {
  constructor(
    readonly status: number,
    readonly code: ErrorCode | 'network',
    message: string,
    readonly details?: unknown,
  ) {
    super(message);
    this.name = 'ApiError';
  }

  /** Field messages keyed by field path, for forms. */
  get fields(): Record<string, string> {
    const list =
      (this.details as { fields?: { path: string; message: string }[] } | undefined)?.fields ?? [];
    return Object.fromEntries(list.map((f) => [f.path, f.message]));
  }
}

let csrf = '';

export function setCsrfToken(token: string) {
  csrf = token;
}

/** The session's CSRF token, for requests made outside `request()` (an upload with progress). */
export function csrfToken(): string {
  return csrf;
}

/**
 * A server answer that does not match the schema its API function names: the contract in
 * `shared/api` and the server have drifted apart. Thrown in development and tests only.
 */
export class AnswerMismatchError extends Error {
  constructor(
    readonly what: string,
    readonly error: z.ZodError,
  ) {
    super(
      `The server's answer to ${what} does not match its schema in shared/api:\n` +
        z.prettifyError(error),
    );
    this.name = 'AnswerMismatchError';
  }
}

/**
 * Whether answers are checked against their schemas: in development and tests. The built app
 * trusts the server and only casts, since checking a large model's answer costs every load.
 */
const checkAnswers = import.meta.env.DEV || import.meta.env.MODE === 'test';

/** No body: a 204 (DELETE, logout). */
export const noAnswer = z.undefined();

/**
 * The answer typed by its schema; in development and tests also checked against it (throwing
 * AnswerMismatchError). The server's own object is returned either way, never the parse's copy,
 * so development and the built app read the same thing. `what`: the request, for the message.
 */
export function checkAnswer<S extends z.ZodType>(answer: S, data: unknown, what: string): z.output<S> {
  if (checkAnswers) {
    const checked = answer.safeParse(data);
    if (!checked.success) throw new AnswerMismatchError(what, checked.error);
  }
  return data as z.output<S>;
}

/**
 * The one fetch wrapper: JSON in and out, the CSRF header on every state-changing request,
 * error bodies turned into ApiError, and the answer typed by `answer`, its schema in
 * `shared/api` (checked against it in development and tests, see `checkAnswer`).
 */
export async function request<S extends z.ZodType>(
  method: string,
  url: string,
  answer: S,
  body?: unknown,
): Promise<z.output<S>> {
  const headers: Record<string, string> = { Accept: 'application/json' };
  if (method !== 'GET') headers['X-CSRF-Token'] = csrf;
  if (body !== undefined) headers['Content-Type'] = 'application/json';
  let response: Response;
  try {
    response = await fetch(url, {
      method,
      headers,
      body: body === undefined ? undefined : JSON.stringify(body),
      credentials: 'same-origin',
    });
  } catch {
    throw new ApiError(
      0,
      'network',
      'The server cannot be reached. Check that Fairsheet is running.',
    );
  }
  if (response.status === 204) return checkAnswer(answer, undefined, `${method} ${url}`);
  const data: unknown = await response.json().catch(() => undefined);
  if (!response.ok) {
    const parsed = errorBody.safeParse(data);
    if (parsed.success) {
      const { code, message, details } = parsed.data.error;
      throw new ApiError(response.status, code as ErrorCode, message, details);
    }
    throw new ApiError(response.status, 'internal', `The server answered ${response.status}.`);
  }
  return checkAnswer(answer, data, `${method} ${url}`);
}
