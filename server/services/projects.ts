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

export function createProjectService(db: Db, models: ModelService) {
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

    async remove(projectId: string): Promise<void> {
      await repo.deleteProject(db, projectId);
    },

    async members(projectId: string): Promise<Member[]> {
      const rows = await repo.listMembers(db, projectId);
      return rows.map((m) => ({ ...m, since: m.since.toISOString() }));
    },
  };
}

export type ProjectService = ReturnType<typeof createProjectService>;
