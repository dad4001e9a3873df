import {
  bigint,
  doublePrecision,
  index,
  integer,
  json,
  jsonb,
  pgTable,
  primaryKey,
  text,
  timestamp,
  uniqueIndex,
  uuid,
  varchar,
} from 'drizzle-orm/pg-core';
// Relative, not '@shared/api': drizzle-kit loads the schema without the app's path aliases.
import { projectRoles } from '../../shared/api/projects';

export const users = pgTable(
  'users',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    /** Stored lower-cased; the unique index is on the stored form. */
    email: text('email').notNull(),
    name: text('name').notNull(),
    passwordHash: text('password_hash').notNull(),
    siteRole: text('site_role', { enum: ['admin', 'member'] })
      .notNull()
      .default('member'),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
    /**
     * When the address was shown to reach the account's owner: the account was made from a
     * link mailed there (an invitation or an address confirmation), or a reset or confirmation
     * link was used. Null for accounts made before addresses were confirmed.
     */
    emailVerifiedAt: timestamp('email_verified_at', { withTimezone: true }),
  },
  (t) => [uniqueIndex('users_email_key').on(t.email)],
);

export const projects = pgTable('projects', {
  id: uuid('id').primaryKey().defaultRandom(),
  name: text('name').notNull(),
  displayUnit: text('display_unit', { enum: ['in', 'mm'] })
    .notNull()
    .default('in'),
  /** As the builder wrote it ("1:8", "1 1/2 in to the foot"); null for full size. */
  modelScale: text('model_scale'),
  createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
});

export const memberships = pgTable(
  'memberships',
  {
    projectId: uuid('project_id')
      .notNull()
      .references(() => projects.id, { onDelete: 'cascade' }),
    userId: uuid('user_id')
      .notNull()
      .references(() => users.id, { onDelete: 'cascade' }),
    role: text('role', { enum: projectRoles }).notNull(),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [
    primaryKey({ columns: [t.projectId, t.userId] }),
    index('memberships_user_idx').on(t.userId),
  ],
);

export const passwordResets = pgTable(
  'password_resets',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    userId: uuid('user_id')
      .notNull()
      .references(() => users.id, { onDelete: 'cascade' }),
    /** SHA-256 of the token sent by mail; the token itself is never stored. */
    tokenHash: text('token_hash').notNull(),
    expiresAt: timestamp('expires_at', { withTimezone: true }).notNull(),
    usedAt: timestamp('used_at', { withTimezone: true }),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex('password_resets_token_key').on(t.tokenHash)],
);

/**
 * A link mailed to confirm an address. For a registration there is no account yet: the name
 * and password hash wait here, and the account is made when the link is opened, so an address
 * nobody has confirmed never holds an account. For an older account (`userId` set) the link
 * only marks its address confirmed.
 */
export const emailConfirmations = pgTable(
  'email_confirmations',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    email: text('email').notNull(),
    /** SHA-256 of the token sent by mail; the token itself is never stored. */
    tokenHash: text('token_hash').notNull(),
    userId: uuid('user_id').references(() => users.id, { onDelete: 'cascade' }),
    name: text('name'),
    passwordHash: text('password_hash'),
    expiresAt: timestamp('expires_at', { withTimezone: true }).notNull(),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [
    uniqueIndex('email_confirmations_token_key').on(t.tokenHash),
    index('email_confirmations_email_idx').on(t.email),
  ],
);

/** The table connect-pg-simple reads and writes; the schema owns it so migrations create it. */
export const sessions = pgTable(
  'session',
  {
    sid: varchar('sid').primaryKey(),
    sess: json('sess').notNull(),
    expire: timestamp('expire', { precision: 6 }).notNull(),
  },
  (t) => [index('IDX_session_expire').on(t.expire)],
);

/** Counters for express-rate-limit, shared by every app instance on the database. */
export const rateLimits = pgTable('rate_limits', {
  key: text('key').primaryKey(),
  hits: integer('hits').notNull().default(0),
  resetAt: timestamp('reset_at', { withTimezone: true }).notNull(),
});

export type UserRow = typeof users.$inferSelect;
export type ProjectRow = typeof projects.$inferSelect;
export type MembershipRow = typeof memberships.$inferSelect;

/** The current model of a project (format v1) and the server's solve of it. */
export const projectModels = pgTable('project_models', {
  projectId: uuid('project_id')
    .primaryKey()
    .references(() => projects.id, { onDelete: 'cascade' }),
  /** Bumped by every save; a save naming an older revision is refused (409). */
  revision: integer('revision').notNull().default(0),
  model: jsonb('model').notNull(),
  result: jsonb('result'),
  /** The features evaluated with the same solve job (null for a revision saved before they were). */
  features: jsonb('features'),
  updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
  updatedBy: uuid('updated_by').references(() => users.id, { onDelete: 'set null' }),
});

/** One row per saved revision: who, when, what changed, and the whole model for restore. */
export const modelRevisions = pgTable(
  'model_revisions',
  {
    projectId: uuid('project_id')
      .notNull()
      .references(() => projects.id, { onDelete: 'cascade' }),
    revision: integer('revision').notNull(),
    userId: uuid('user_id').references(() => users.id, { onDelete: 'set null' }),
    /** Who did it, as recorded in the bundle this project was imported from (user_id is null). */
    authorName: text('author_name'),
    authorEmail: text('author_email'),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
    summary: text('summary').notNull(),
    diff: jsonb('diff').notNull(),
    model: jsonb('model').notNull(),
  },
  (t) => [primaryKey({ columns: [t.projectId, t.revision] })],
);

/**
 * Stored files, one row per distinct content (the key is its SHA-256, as in the storage module).
 * A row exists exactly while some sheet uses the file; sheets lock it to add or drop a use.
 */
export const files = pgTable('files', {
  sha256: text('sha256').primaryKey(),
  mimeType: text('mime_type').notNull(),
  sizeBytes: bigint('size_bytes', { mode: 'number' }).notNull(),
  createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
});

/** One uploaded page (a PDF page or an image) with its view settings, calibration and pins. */
export const sheets = pgTable(
  'sheets',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    /** Upload order, so the pages of one upload list in order. */
    seq: integer('seq').generatedAlwaysAsIdentity(),
    projectId: uuid('project_id')
      .notNull()
      .references(() => projects.id, { onDelete: 'cascade' }),
    fileSha256: text('file_sha256')
      .notNull()
      .references(() => files.sha256, { onDelete: 'restrict' }),
    /** As uploaded, sanitised; metadata only, never a path. */
    originalName: text('original_name').notNull(),
    title: text('title').notNull(),
    kind: text('kind', { enum: ['drawing', 'photo'] }).notNull(),
    page: integer('page').notNull().default(1),
    pageCount: integer('page_count').notNull().default(1),
    widthPx: doublePrecision('width_px').notNull(),
    heightPx: doublePrecision('height_px').notNull(),
    rotation: integer('rotation').notNull().default(0),
    straighten: doublePrecision('straighten').notNull().default(0),
    calibration: jsonb('calibration'),
    pins: jsonb('pins').notNull().default([]),
    measurements: jsonb('measurements').notNull().default([]),
    /** Bumped by every change; a change naming an older one is refused (409). */
    revision: integer('revision').notNull().default(0),
    createdBy: uuid('created_by').references(() => users.id, { onDelete: 'set null' }),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
    updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [
    index('sheets_project_idx').on(t.projectId, t.seq),
    index('sheets_file_idx').on(t.fileSha256),
  ],
);

export type FileRow = typeof files.$inferSelect;
export type SheetRow = typeof sheets.$inferSelect;
