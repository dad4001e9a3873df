import type {
  ActivityEntry,
  Check,
  Comment,
  CommentBody,
  Correction,
  CorrectionBody,
  Invitation,
  InvitationBody,
  InvitationPreview,
  ProjectRole,
} from '@shared/api';
import { request } from './client';

const project = (id: string) => `/api/projects/${encodeURIComponent(id)}`;
const query = (params: Record<string, string | undefined>) => {
  const q = new URLSearchParams();
  for (const [k, v] of Object.entries(params)) if (v) q.set(k, v);
  const text = q.toString();
  return text ? `?${text}` : '';
};

export interface CheckSummary {
  derived: number;
  checked: number;
  void: number;
}

/** Invitations, members, checks, comments, corrections and activity of one project. */
export const teamApi = {
  invitations: (projectId: string) =>
    request<{ invitations: Invitation[] }>('GET', `${project(projectId)}/invitations`).then(
      (r) => r.invitations,
    ),
  invite: (projectId: string, body: InvitationBody) =>
    request<Invitation>('POST', `${project(projectId)}/invitations`, body),
  revokeInvitation: (projectId: string, invitationId: string) =>
    request<void>(
      'DELETE',
      `${project(projectId)}/invitations/${encodeURIComponent(invitationId)}`,
    ),
  resendInvitation: (projectId: string, invitationId: string) =>
    request<Invitation>(
      'POST',
      `${project(projectId)}/invitations/${encodeURIComponent(invitationId)}/resend`,
    ),

  /** What an invitation link says; answered signed out too. */
  previewInvitation: (token: string) =>
    request<InvitationPreview>('GET', `/api/invitations/${encodeURIComponent(token)}`),
  acceptInvitation: (token: string) =>
    request<{ projectId: string; role: ProjectRole }>(
      'POST',
      `/api/invitations/${encodeURIComponent(token)}/accept`,
    ),

  changeRole: (projectId: string, userId: string, role: ProjectRole) =>
    request<unknown>('PATCH', `${project(projectId)}/members/${encodeURIComponent(userId)}`, {
      role,
    }),
  removeMember: (projectId: string, userId: string) =>
    request<void>('DELETE', `${project(projectId)}/members/${encodeURIComponent(userId)}`),

  checks: (projectId: string) =>
    request<{ checks: Check[]; summary: CheckSummary }>('GET', `${project(projectId)}/checks`),
  check: (projectId: string, dimension: string) =>
    request<Check>('POST', `${project(projectId)}/checks`, { dimension }),
  uncheck: (projectId: string, dimension: string) =>
    request<void>('DELETE', `${project(projectId)}/checks/${encodeURIComponent(dimension)}`),

  comments: (projectId: string, target: { targetKind?: string; targetId?: string } = {}) =>
    request<{ comments: Comment[] }>('GET', `${project(projectId)}/comments${query(target)}`).then(
      (r) => r.comments,
    ),
  comment: (projectId: string, body: CommentBody) =>
    request<Comment>('POST', `${project(projectId)}/comments`, body),

  corrections: (projectId: string) =>
    request<{ corrections: Correction[] }>('GET', `${project(projectId)}/corrections`).then(
      (r) => r.corrections,
    ),
  correct: (projectId: string, body: CorrectionBody) =>
    request<Correction>('POST', `${project(projectId)}/corrections`, body),

  activity: (projectId: string, kind?: ActivityEntry['kind']) =>
    request<{ entries: ActivityEntry[] }>(
      'GET',
      `${project(projectId)}/activity${query({ kind })}`,
    ).then((r) => r.entries),
};
