import { z } from 'zod';

/**
 * The body of a supertest answer, checked against its schema in shared/api (the one the
 * client's API module names): when the server's answer and the contract drift apart, the test
 * fails naming the request and each field that does not match.
 *
 * @example const stored = answerOf(storedModel, await c.get(url('/model')).expect(200));
 */
export function answerOf<S extends z.ZodType>(
  schema: S,
  res: { body: unknown; req?: { method?: string; path?: string } },
): z.output<S> {
  const checked = schema.safeParse(res.body);
  if (!checked.success) {
    const what = `${res.req?.method ?? ''} ${res.req?.path ?? ''}`.trim();
    throw new Error(
      `The answer to ${what || 'the request'} does not match its schema in shared/api:\n` +
        z.prettifyError(checked.error),
    );
  }
  return checked.data;
}
