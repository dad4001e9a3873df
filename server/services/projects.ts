import type {
  CreateProjectFields,
  Member,
  Project,
  ProjectRole,
  UpdateProjectFields,
} from '@shared/api';
import type { Db } from '../db/client';
import * as repo from '../db/projects';
import type { ProjectRow } from '../db/schema';
import type { ModelService } from './models';

export function toProject(row: ProjectRow, role: ProjectRole): Project {
  return {
    id: row.id,
    name: row.name,
    displayUnit: row.displayUnit,
    modelScale: row.modelScale,
    role,
    createdAt: row.createdAt.toISOString(),
    updatedAt: row.updatedAt.toISOString(),
  };
}

/** Removes stored files that no sheet uses any more (the sheet service's `releaseFiles`). */
export type FileReleaser = (keys: string[]) => Promise<void>;

/**
 * `releaseFiles`: how a deleted project's files leave the storage at once; without it (the
 * demo seed, which deletes nothing) they would wait for the start-up sweep.
 */
export function createProjectService(db: Db, models: ModelService, releaseFiles?: FileReleaser) {
  return {
    async list(userId: string): Promise<Project[]> {
      const rows = await repo.listProjectsOfUser(db, userId);
      return rows.map((r) => toProject(r.project, r.role));
    },

    async create(userId: string, body: CreateProjectFields): Promise<Project> {
      const row = await db.transaction(async (tx) => {
        const project = await repo.insertProject(tx, userId, {
          name: body.name,
          displayUnit: body.displayUnit,
          modelScale: body.modelScale ?? null,
        });
        await models.initialise(tx, project.id, project.displayUnit, userId);
        return project;
      });
      return toProject(row, 'owner');
    },

    async update(
      projectId: string,
      role: ProjectRole,
      body: UpdateProjectFields,
    ): Promise<Project> {
      const row = await repo.updateProject(db, projectId, body);
      return toProject(row, role);
    },

    /** Deletes the project, then each of its files that no other project's sheet uses. */
    async remove(projectId: string): Promise<void> {
      const keys = await db.transaction(async (tx) => {
        const files = await repo.lockProjectFiles(tx, projectId);
        await repo.deleteProject(tx, projectId);
        return files;
      });
      await releaseFiles?.(keys);
    },

    async members(projectId: string): Promise<Member[]> {
      const rows = await repo.listMembers(db, projectId);
      return rows.map((m) => ({ ...m, since: m.since.toISOString() }));
    },
  };
}

export type ProjectService = ReturnType<typeof createProjectService>;
