import type { LoginBody, RegisterBody, SessionResponse } from '@shared/api';
import { request, setCsrfToken } from './client';

async function withToken(promise: Promise<SessionResponse>): Promise<SessionResponse> {
  const answer = await promise;
  setCsrfToken(answer.csrfToken);
  return answer;
}

export const authApi = {
  session: () => withToken(request<SessionResponse>('GET', '/api/auth/session')),
  login: (body: LoginBody) => withToken(request<SessionResponse>('POST', '/api/auth/login', body)),
  /** Signed in at once (an invitation sent to this address), or a message to check the mail. */
  register: async (body: RegisterBody): Promise<SessionResponse | { message: string }> => {
    const answer = await request<SessionResponse | { message: string }>(
      'POST',
      '/api/auth/register',
      body,
    );
    if ('csrfToken' in answer) setCsrfToken(answer.csrfToken);
    return answer;
  },
  confirmEmail: (token: string) =>
    withToken(request<SessionResponse>('POST', '/api/auth/confirm-email', { token })),
  logout: () => request<void>('POST', '/api/auth/logout'),
  requestReset: (email: string) =>
    request<{ message: string }>('POST', '/api/auth/password-reset', { email }),
  confirmReset: (token: string, password: string) =>
    request<{ message: string }>('POST', '/api/auth/password-reset/confirm', { token, password }),
};
