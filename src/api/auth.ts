import {
  messageAnswer,
  registerAnswer,
  sessionResponse,
  type LoginBody,
  type RegisterBody,
  type SessionResponse,
} from '@shared/api';
import { noAnswer, request, setCsrfToken } from './client';

async function withToken(promise: Promise<SessionResponse>): Promise<SessionResponse> {
  const answer = await promise;
  setCsrfToken(answer.csrfToken);
  return answer;
}

export const authApi = {
  session: () => withToken(request('GET', '/api/auth/session', sessionResponse)),
  login: (body: LoginBody) =>
    withToken(request('POST', '/api/auth/login', sessionResponse, body)),
  /** Signed in at once (an invitation sent to this address), or a message to check the mail. */
  register: async (body: RegisterBody) => {
    const answer = await request('POST', '/api/auth/register', registerAnswer, body);
    if ('csrfToken' in answer) setCsrfToken(answer.csrfToken);
    return answer;
  },
  confirmEmail: (token: string) =>
    withToken(request('POST', '/api/auth/confirm-email', sessionResponse, { token })),
  logout: () => request('POST', '/api/auth/logout', noAnswer),
  requestReset: (email: string) =>
    request('POST', '/api/auth/password-reset', messageAnswer, { email }),
  confirmReset: (token: string, password: string) =>
    request('POST', '/api/auth/password-reset/confirm', messageAnswer, { token, password }),
};
