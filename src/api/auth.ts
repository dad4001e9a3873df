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
  register: (body: RegisterBody) =>
    withToken(request<SessionResponse>('POST', '/api/auth/register', body)),
  logout: () => request<void>('POST', '/api/auth/logout'),
  requestReset: (email: string) =>
    request<{ message: string }>('POST', '/api/auth/password-reset', { email }),
  confirmReset: (token: string, password: string) =>
    request<{ message: string }>('POST', '/api/auth/password-reset/confirm', { token, password }),
};
