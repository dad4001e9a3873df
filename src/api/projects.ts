import {
  memberList,
  project,
  projectList,
  type CreateProjectBody,
  type UpdateProjectBody,
} from '@shared/api';
import { noAnswer, request } from './client';

const base = '/api/projects';
const one = (id: string) => `${base}/${encodeURIComponent(id)}`;

export const projectsApi = {
  list: () => request('GET', base, projectList).then((r) => r.projects),
  get: (id: string) => request('GET', one(id), project),
  create: (body: CreateProjectBody) => request('POST', base, project, body),
  update: (id: string, body: UpdateProjectBody) => request('PATCH', one(id), project, body),
  remove: (id: string) => request('DELETE', one(id), noAnswer),
  members: (id: string) =>
    request('GET', `${one(id)}/members`, memberList).then((r) => r.members),
};
