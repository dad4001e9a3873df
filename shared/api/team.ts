import { z } from 'zod';
import { email, user } from './auth';
import { projectRole } from './projects';

/** Invitations, member roles, second-person checks, comments, corrections and the activity log. */

export const invitationBody = z.object({
  email,
  role: projectRole,
});
export type InvitationBody = z.input<typeof invitationBody>;

export const invitationState = z.enum(['pending', 'accepted', 'revoked', 'expired']);

export const invitation = z.object({
  id: z.uuid(),
  email: z.string(),
  role: projectRole,
  state: invitationState,
  invitedBy: z.string(),
  createdAt: z.string(),
  expiresAt: z.string(),
  lastSentAt: z.string(),
});
export type Invitation = z.infer<typeof invitation>;

export const invitationParams = z.object({
  projectId: z.uuid({ message: 'Not a project id' }),
  invitationId: z.uuid({ message: 'Not an invitation id' }),
});

export const invitationToken = z.object({ token: z.string().min(20).max(200) });

/** What the invitation page shows before anyone signs in. */
export const invitationPreview = z.object({
  projectName: z.string(),
  invitedBy: z.string(),
  email: z.string(),
  role: projectRole,
  state: invitationState,
  expiresAt: z.string(),
});
export type InvitationPreview = z.infer<typeof invitationPreview>;

export const memberParams = z.object({
  projectId: z.uuid({ message: 'Not a project id' }),
  userId: z.uuid({ message: 'Not a user id' }),
});
export const memberRoleBody = z.object({ role: projectRole });

/**
 * Who did something: an account's id and name, or for a former member (an account since deleted,
 * or a person an imported bundle recorded) an empty id and the name as recorded.
 */
const person = user.pick({ name: true }).extend({ id: z.uuid().or(z.literal('')) });

export const checkState = z.enum(['current', 'void']);
export const check = z.object({
  dimension: z.string(),
  state: checkState,
  /** The value when it was checked, model unit. */
  value: z.number(),
  /** The value now (null when it no longer solves). */
  valueNow: z.number().nullable(),
  checkedBy: person,
  checkedAt: z.string(),
  revision: z.number().int(),
});
export type Check = z.infer<typeof check>;

export const checkBody = z.object({ dimension: z.string().min(1).max(120) });
export const checkParams = z.object({
  projectId: z.uuid({ message: 'Not a project id' }),
  dimension: z.string().min(1).max(120),
});

export const commentTargetKind = z.enum(['dimension', 'relation', 'pin', 'sheet']);
export const commentBody = z.object({
  targetKind: commentTargetKind,
  /** Dimension name, relation id, `sheetId:pinId`, or sheet id. */
  targetId: z.string().min(1).max(200),
  body: z.string().trim().min(1, { message: 'Write something' }).max(4000),
});
export type CommentBody = z.input<typeof commentBody>;
export const comment = commentBody.extend({
  id: z.uuid(),
  author: person,
  createdAt: z.string(),
  /** Members the text @mentions; each was sent a mail. */
  mentions: z.array(z.string()),
});
export type Comment = z.infer<typeof comment>;
export const commentQuery = z.object({
  targetKind: commentTargetKind.optional(),
  targetId: z.string().max(200).optional(),
});

export const correctionSource = z.enum([
  'another builder',
  'mating part',
  'photograph',
  'other sheet',
  'measurement',
  'other',
]);
export const correctionBody = z.object({
  sheetId: z.uuid().nullable().default(null),
  dimension: z.string().max(120).nullable().default(null),
  /** What the drawing says. */
  wrong: z.string().trim().min(1).max(200),
  /** What it was changed to. */
  corrected: z.string().trim().min(1).max(200),
  reason: z.string().trim().max(2000).default(''),
  source: correctionSource,
  sourceNote: z.string().trim().max(500).default(''),
});
export type CorrectionBody = z.input<typeof correctionBody>;
export const correction = correctionBody.extend({
  id: z.uuid(),
  /** The title of the sheet it was found on, for people to read (the id is for links). */
  sheetTitle: z.string().nullable().optional(),
  author: person,
  createdAt: z.string(),
});
export type Correction = z.infer<typeof correction>;

export const activityKind = z.enum([
  'save',
  'check',
  'uncheck',
  'comment',
  'correction',
  'invitation',
  'member',
  'upload',
  'sheet',
]);
export const activityEntry = z.object({
  id: z.string(),
  kind: activityKind,
  summary: z.string(),
  details: z.unknown(),
  user: person.nullable(),
  createdAt: z.string(),
});
export type ActivityEntry = z.infer<typeof activityEntry>;
export const activityQuery = z.object({
  kind: activityKind.optional(),
  limit: z.coerce.number().int().min(1).max(500).default(200),
});

// Answers.

export const invitationList = z.object({ invitations: z.array(invitation) });

/** POST /invitations/:token/accept: the project joined, with the role held there now. */
export const invitationAccepted = z.object({ projectId: z.uuid(), role: projectRole });
export type InvitationAccepted = z.infer<typeof invitationAccepted>;

/** Derived values solved, and of them the checks still current and those void. */
export const checkSummary = z.object({
  derived: z.number().int().nonnegative(),
  checked: z.number().int().nonnegative(),
  void: z.number().int().nonnegative(),
});
export type CheckSummary = z.infer<typeof checkSummary>;

export const checkList = z.object({ checks: z.array(check), summary: checkSummary });
export type CheckList = z.infer<typeof checkList>;

export const commentList = z.object({ comments: z.array(comment) });
export const correctionList = z.object({ corrections: z.array(correction) });
export const activityList = z.object({ entries: z.array(activityEntry) });
