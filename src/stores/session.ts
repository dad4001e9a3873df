import { defineStore } from 'pinia';
import { computed, ref } from 'vue';
import type { LoginBody, RegisterBody, User } from '@shared/api';
import { authApi } from '@/api/auth';

export const useSessionStore = defineStore('session', () => {
  const user = ref<User | null>(null);
  const loaded = ref(false);
  let loading: Promise<void> | undefined;

  const signedIn = computed(() => user.value !== null);

  async function load() {
    const answer = await authApi.session();
    user.value = answer.user;
    loaded.value = true;
  }

  /** Loads the session once; later calls reuse the answer. */
  function ensureLoaded(): Promise<void> {
    if (loaded.value) return Promise.resolve();
    loading ??= load().finally(() => (loading = undefined));
    return loading;
  }

  async function login(body: LoginBody) {
    user.value = (await authApi.login(body)).user;
  }

  async function register(body: RegisterBody) {
    user.value = (await authApi.register(body)).user;
  }

  async function logout() {
    await authApi.logout();
    user.value = null;
    await load();
  }

  return { user, loaded, signedIn, ensureLoaded, load, login, register, logout };
});
