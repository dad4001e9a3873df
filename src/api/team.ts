import {
  activityList,
  check,
  checkList,
  comment,
  commentList,
  correction,
  correctionList,
  invitation,
  invitationAccepted,
  invitationList,
  invitationPreview,
  type ActivityEntry,
  type CommentBody,
  type CorrectionBody,
  type InvitationBody,
  type ProjectRole,
} from '@shared/api';
import { noAnswer, request } from './client';

export type { CheckSummary } from '@shared/api';

const project = (id: string) => `/api/projects/${encodeURIComponent(id)}`;
const query = (params: Record<string, string | undefined>) => {
  const q = new URLSearchParams();
  for (const [k, v] of Object.entries(params)) if (v) q.set(k, v);
  const text = q.toString();
  return text ? `?${text}` : '';
};

/** Invitations, members, checks, comments, corrections and activity of one project. */
export const teamApi = {
  invitations: (projectId: string) =>
    request('GET', `${project(projectId)}/invitations`, invitationList).then(
      (r) => r.invitations,
    ),
  invite: (projectId: string, body: InvitationBody) =>
    request('POST', `${project(projectId)}/invitations`, invitation, body),
  revokeInvitation: (projectId: string, invitationId: string) =>
    request(
      'DELETE',
      `${project(projectId)}/invitations/${encodeURIComponent(invitationId)}`,
      noAnswer,
    ),
  resendInvitation: (projectId: string, invitationId: string) =>
    request(
      'POST',
      `${project(projectId)}/invitations/${encodeURIComponent(invitationId)}/resend`,
      invitation,
    ),

  /** What an invitation link says; answered signed out too. */
  previewInvitation: (token: string) =>
    request('GET', `/api/invitations/${encodeURIComponent(token)}`, invitationPreview),
  acceptInvitation: (token: string) =>
    request(
      'POST',
      `/api/invitations/${encodeURIComponent(token)}/accept`,
      invitationAccepted,
    ),

  changeRole: (projectId: string, userId: string, role: ProjectRole) =>
    request(
      'PATCH',
      `${project(projectId)}/members/${encodeURIComponent(userId)}`,
      noAnswer,
      { role },
    ),
  removeMember: (projectId: string, userId: string) =>
    request('DELETE', `${project(projectId)}/members/${encodeURIComponent(userId)}`, noAnswer),

  checks: (projectId: string) => request('GET', `${project(projectId)}/checks`, checkList),
  check: (projectId: string, dimension: string) =>
    request('POST', `${project(projectId)}/checks`, check, { dimension }),
  uncheck: (projectId: string, dimension: string) =>
    request(
      'DELETE',
      `${project(projectId)}/checks/${encodeURIComponent(dimension)}`,
      noAnswer,
    ),

  comments: (projectId: string, target: { targetKind?: string; targetId?: string } = {}) =>
    request('GET', `${project(projectId)}/comments${query(target)}`, commentList).then(
      (r) => r.comments,
    ),
  comment: (projectId: string, body: CommentBody) =>
    request('POST', `${project(projectId)}/comments`, comment, body),

  corrections: (projectId: string) =>
    request('GET', `${project(projectId)}/corrections`, correctionList).then(
      (r) => r.corrections,
    ),
  correct: (projectId: string, body: CorrectionBody) =>
    request('POST', `${project(projectId)}/corrections`, correction, body),

  activity: (projectId: string, kind?: ActivityEntry['kind']) =>
    request('GET', `${project(projectId)}/activity${query({ kind })}`, activityList).then(
      (r) => r.entries,
    ),
};
