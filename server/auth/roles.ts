import type { RequestHandler } from 'express';
import { editorRoles, projectRoles, type ProjectRole } from '@shared/api';
import type { Db } from '../db/client';
import { findMembership } from '../db/projects';
import type { ProjectRow } from '../db/schema';
import { forbidden, notFound, unauthenticated } from '../http/errors';

export interface ProjectAccess {
  project: ProjectRow;
  role: ProjectRole;
  /** The model's revision as the access was checked (null only before a model exists). */
  modelRevision: number | null;
}

export const anyMember: readonly ProjectRole[] = projectRoles;
export const editors: readonly ProjectRole[] = editorRoles;

/**
 * Loads the project named by `:projectId` for the signed-in user and checks the role.
 * Not a member: 404 (a stranger learns nothing of the project); wrong role: 403.
 * The access is left on `res.locals.access` for the handler.
 */
export function requireProjectRole(
  db: Db,
  roles: readonly ProjectRole[] = anyMember,
): RequestHandler {
  return async (req, res, next) => {
    const userId = req.session?.userId;
    if (!userId) throw unauthenticated();
    const access = await findMembership(db, String(req.params.projectId), userId);
    if (!access) throw notFound('The project');
    if (!roles.includes(access.role)) throw forbidden();
    res.locals.access = access satisfies ProjectAccess;
    next();
  };
}
