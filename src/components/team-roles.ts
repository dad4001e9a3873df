import type { ProjectRole } from '@shared/api';

/** What each role may do, as the invite form and the members table explain it. */
export const roleHelp: Record<ProjectRole, string> = {
  owner: 'everything, including the team and deleting the project',
  editor: 'edits dimensions, relations, sheets and parts',
  checker: 'checks derived values, comments and records corrections; the model stays read only',
  viewer: 'reads everything, changes nothing',
};

export const roleOptions = (Object.keys(roleHelp) as ProjectRole[]).map((role) => ({
  value: role,
  label: role,
}));
