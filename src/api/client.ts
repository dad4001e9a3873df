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
 * The one fetch wrapper: JSON in and out, the CSRF header on every state-changing request,
 * and error bodies turned into ApiError.
 */
export async function request<T>(method: string, url: string, body?: unknown): Promise<T> {
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
  if (response.status === 204) return undefined as T;
  const data: unknown = await response.json().catch(() => undefined);
  if (!response.ok) {
    const parsed = errorBody.safeParse(data);
    if (parsed.success) {
      const { code, message, details } = parsed.data.error;
      throw new ApiError(response.status, code as ErrorCode, message, details);
    }
    throw new ApiError(response.status, 'internal', `The server answered ${response.status}.`);
  }
  return data as T;
}
