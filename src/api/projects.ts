import type { CreateProjectBody, Member, Project, UpdateProjectBody } from '@shared/api';
import { request } from './client';

const base = '/api/projects';
const one = (id: string) => `${base}/${encodeURIComponent(id)}`;

export const projectsApi = {
  list: () => request<{ projects: Project[] }>('GET', base).then((r) => r.projects),
  get: (id: string) => request<Project>('GET', one(id)),
  create: (body: CreateProjectBody) => request<Project>('POST', base, body),
  update: (id: string, body: UpdateProjectBody) => request<Project>('PATCH', one(id), body),
  remove: (id: string) => request<void>('DELETE', one(id)),
  members: (id: string) =>
    request<{ members: Member[] }>('GET', `${one(id)}/members`).then((r) => r.members),
};
