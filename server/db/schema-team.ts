// Tables of the team and review features: invitations, checks, comments, corrections, activity.
import {
  bigserial,
  doublePrecision,
  index,
  integer,
  jsonb,
  pgTable,
  primaryKey,
  text,
  timestamp,
  uniqueIndex,
  uuid,
} from 'drizzle-orm/pg-core';
// Relative, not '@shared/api': drizzle-kit loads the schema without the app's path aliases.
import { projectRoles } from '../../shared/api/projects';
import { projects, users } from './schema';

export const invitations = pgTable(
  'invitations',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    projectId: uuid('project_id')
      .notNull()
      .references(() => projects.id, { onDelete: 'cascade' }),
    email: text('email').notNull(),
    role: text('role', { enum: projectRoles }).notNull(),
    /** SHA-256 of the token in the mailed link; the token itself is never stored. */
    tokenHash: text('token_hash').notNull(),
    invitedBy: uuid('invited_by').references(() => users.id, { onDelete: 'set null' }),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
    lastSentAt: timestamp('last_sent_at', { withTimezone: true }).notNull().defaultNow(),
    expiresAt: timestamp('expires_at', { withTimezone: true }).notNull(),
    acceptedAt: timestamp('accepted_at', { withTimezone: true }),
    acceptedBy: uuid('accepted_by').references(() => users.id, { onDelete: 'set null' }),
    revokedAt: timestamp('revoked_at', { withTimezone: true }),
  },
  (t) => [
    uniqueIndex('invitations_token_key').on(t.tokenHash),
    index('invitations_project_idx').on(t.projectId),
  ],
);

/** A second person's sign-off on a derived value, with the fingerprint of what it rests on. */
export const checks = pgTable(
  'checks',
  {
    projectId: uuid('project_id')
      .notNull()
      .references(() => projects.id, { onDelete: 'cascade' }),
    dimension: text('dimension').notNull(),
    /** Null for a check imported from a bundle: author_name says who made it. */
    userId: uuid('user_id').references(() => users.id, { onDelete: 'cascade' }),
    /** Who did it, as recorded in the bundle this project was imported from (user_id is null). */
    authorName: text('author_name'),
    authorEmail: text('author_email'),
    value: doublePrecision('value').notNull(),
    fingerprint: text('fingerprint').notNull(),
    revision: integer('revision').notNull(),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [primaryKey({ columns: [t.projectId, t.dimension] })],
);

export const comments = pgTable(
  'comments',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    projectId: uuid('project_id')
      .notNull()
      .references(() => projects.id, { onDelete: 'cascade' }),
    targetKind: text('target_kind', { enum: ['dimension', 'relation', 'pin', 'sheet'] }).notNull(),
    targetId: text('target_id').notNull(),
    userId: uuid('user_id').references(() => users.id, { onDelete: 'set null' }),
    /** Who did it, as recorded in the bundle this project was imported from (user_id is null). */
    authorName: text('author_name'),
    authorEmail: text('author_email'),
    body: text('body').notNull(),
    mentions: jsonb('mentions').notNull().default([]),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('comments_target_idx').on(t.projectId, t.targetKind, t.targetId)],
);

/** What was wrong on a source sheet, what it became, who, why and on what evidence. */
export const corrections = pgTable(
  'corrections',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    projectId: uuid('project_id')
      .notNull()
      .references(() => projects.id, { onDelete: 'cascade' }),
    sheetId: uuid('sheet_id'),
    dimension: text('dimension'),
    wrong: text('wrong').notNull(),
    corrected: text('corrected').notNull(),
    reason: text('reason').notNull().default(''),
    source: text('source').notNull(),
    sourceNote: text('source_note').notNull().default(''),
    userId: uuid('user_id').references(() => users.id, { onDelete: 'set null' }),
    /** Who did it, as recorded in the bundle this project was imported from (user_id is null). */
    authorName: text('author_name'),
    authorEmail: text('author_email'),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('corrections_project_idx').on(t.projectId)],
);

/** The project's time line: saves, checks, comments, invitations, uploads. */
export const activity = pgTable(
  'activity',
  {
    id: bigserial('id', { mode: 'number' }).primaryKey(),
    projectId: uuid('project_id')
      .notNull()
      .references(() => projects.id, { onDelete: 'cascade' }),
    userId: uuid('user_id').references(() => users.id, { onDelete: 'set null' }),
    /** Who did it, as recorded in the bundle this project was imported from (user_id is null). */
    authorName: text('author_name'),
    authorEmail: text('author_email'),
    kind: text('kind').notNull(),
    summary: text('summary').notNull(),
    details: jsonb('details').notNull().default({}),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('activity_project_idx').on(t.projectId, t.id)],
);
