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

  /** Answers the message to show when the account waits for its mailed link. */
  async function register(body: RegisterBody): Promise<string | undefined> {
    const answer = await authApi.register(body);
    if ('message' in answer) return answer.message;
    user.value = answer.user;
  }

  async function confirmEmail(token: string) {
    user.value = (await authApi.confirmEmail(token)).user;
  }

  async function logout() {
    await authApi.logout();
    user.value = null;
    await load();
  }

  return { user, loaded, signedIn, ensureLoaded, load, login, register, confirmEmail, logout };
});
