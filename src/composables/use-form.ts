import { reactive, ref } from 'vue';
import type { z } from 'zod';
import { ApiError } from '@/api/client';
import { describeError } from '@/api/messages';

/**
 * Form state checked with the same zod schema the server uses. `submit` validates first,
 * then runs the action; field messages and a general error are kept for the template, and
 * the typed values are never cleared on failure.
 */
export function useForm<S extends z.ZodType>(schema: S, initial: z.input<S>) {
  const values = reactive({ ...(initial as object) }) as z.input<S>;
  const fieldErrors = ref<Record<string, string>>({});
  const error = ref('');
  const busy = ref(false);

  async function submit(action: (body: z.output<S>) => Promise<void>) {
    error.value = '';
    fieldErrors.value = {};
    const parsed = schema.safeParse(values);
    if (!parsed.success) {
      fieldErrors.value = Object.fromEntries(
        parsed.error.issues.map((i) => [i.path.join('.'), i.message]),
      );
      return;
    }
    busy.value = true;
    try {
      await action(parsed.data);
    } catch (err) {
      if (err instanceof ApiError) fieldErrors.value = err.fields;
      error.value = describeError(err);
    } finally {
      busy.value = false;
    }
  }

  const status = (field: string) => (fieldErrors.value[field] ? 'error' : undefined);

  return { values, fieldErrors, error, busy, submit, status };
}
