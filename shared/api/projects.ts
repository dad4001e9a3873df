import { z } from 'zod';

/** A member's role in a project: the one list the database, the server and the client use. */
export const projectRoles = ['owner', 'editor', 'checker', 'viewer'] as const;
export const projectRole = z.enum(projectRoles);
export type ProjectRole = z.infer<typeof projectRole>;

/** The roles that may change a project's model, sheets and parts. */
export const editorRoles: readonly ProjectRole[] = ['owner', 'editor'];

/** The roles that may comment and record corrections: every member but a viewer. */
export const reviewerRoles: readonly ProjectRole[] = ['owner', 'editor', 'checker'];

/** The roles that may check a derived value (a second person's check). */
export const checkerRoles: readonly ProjectRole[] = ['owner', 'checker'];

/**
 * Whether a member with this role may edit (no role: not a member, may not).
 *
 * @example canEdit('checker') // false
 */
export function canEdit(role: ProjectRole | null | undefined): boolean {
  return role != null && editorRoles.includes(role);
}

export const displayUnit = z.enum(['in', 'mm']);

/** "1:8", "1/8", "1:11.3", or "1 1/2 in to the foot"; checked loosely here, parsed by the engine. */
export const modelScale = z
  .string()
  .trim()
  .max(40)
  .regex(/^[0-9 ./:½¼¾"'a-z=-]+$/i, {
    message: 'Write a scale such as 1:8 or 1 1/2 in to the foot',
  });

export const projectId = z.object({ projectId: z.uuid({ message: 'Not a project id' }) });

export const project = z.object({
  id: z.uuid(),
  name: z.string(),
  displayUnit,
  modelScale: z.string().nullable(),
  role: projectRole,
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type Project = z.infer<typeof project>;

const projectFields = z.object({
  name: z.string().trim().min(1, { message: 'Give the project a name' }).max(200),
  displayUnit,
  /** An empty field means full size. */
  modelScale: z.preprocess((v) => (v === '' ? null : v), modelScale.nullable()).optional(),
});

export const createProjectBody = projectFields.extend({ displayUnit: displayUnit.default('in') });
export type CreateProjectBody = z.input<typeof createProjectBody>;
export type CreateProjectFields = z.output<typeof createProjectBody>;

/** Only the fields sent change: no defaults here, so a rename leaves the unit alone. */
export const updateProjectBody = projectFields
  .partial()
  .refine((b) => Object.keys(b).length > 0, { message: 'Nothing to change' });
export type UpdateProjectBody = z.input<typeof updateProjectBody>;
export type UpdateProjectFields = z.output<typeof updateProjectBody>;

export const member = z.object({
  userId: z.uuid(),
  name: z.string(),
  email: z.string(),
  role: projectRole,
  since: z.string(),
});
export type Member = z.infer<typeof member>;

export const projectList = z.object({ projects: z.array(project) });
export const memberList = z.object({ members: z.array(member) });
