import { defineStore } from 'pinia';
import { computed, ref } from 'vue';
import {
  canEdit as roleCanEdit,
  type CreateProjectBody,
  type Member,
  type Project,
  type UpdateProjectBody,
} from '@shared/api';
import { projectsApi } from '@/api/projects';

export const useProjectsStore = defineStore('projects', () => {
  const projects = ref<Project[]>([]);
  const current = ref<Project | null>(null);
  const members = ref<Member[]>([]);
  const loading = ref(false);
  /** Whether the signed-in user may edit the open project. */
  const canEdit = computed(() => roleCanEdit(current.value?.role));

  async function loadList() {
    loading.value = true;
    try {
      projects.value = await projectsApi.list();
    } finally {
      loading.value = false;
    }
  }

  async function open(id: string) {
    current.value = null;
    members.value = [];
    const [project, people] = await Promise.all([projectsApi.get(id), projectsApi.members(id)]);
    current.value = project;
    members.value = people;
  }

  async function create(body: CreateProjectBody): Promise<Project> {
    const project = await projectsApi.create(body);
    projects.value = [project, ...projects.value];
    return project;
  }

  async function update(id: string, body: UpdateProjectBody) {
    const project = await projectsApi.update(id, body);
    if (current.value?.id === id) current.value = project;
    projects.value = projects.value.map((p) => (p.id === id ? project : p));
  }

  async function remove(id: string) {
    await projectsApi.remove(id);
    projects.value = projects.value.filter((p) => p.id !== id);
    if (current.value?.id === id) current.value = null;
  }

  return { projects, current, members, loading, canEdit, loadList, open, create, update, remove };
});
