import { z } from 'zod';

export const email = z
  .email({ message: 'Enter a valid e-mail address' })
  .max(254)
  .transform((v) => v.trim().toLowerCase());

export const password = z
  .string()
  .min(10, { message: 'Use at least 10 characters' })
  .max(200, { message: 'Use at most 200 characters' });

export const siteRole = z.enum(['admin', 'member']);

export const user = z.object({
  id: z.uuid(),
  email: z.string(),
  name: z.string(),
  siteRole,
});
export type User = z.infer<typeof user>;

export const registerBody = z.object({
  name: z.string().trim().min(1, { message: 'Enter your name' }).max(120),
  email,
  password,
  /**
   * The token of the invitation link the person came from. When it was sent to this address,
   * the link has already shown the address reaches them: the account is made and signed in
   * at once, with no confirmation mail.
   */
  invitation: z.string().min(20).max(200).optional(),
});
export type RegisterBody = z.infer<typeof registerBody>;

export const loginBody = z.object({
  email,
  password: z.string().min(1, { message: 'Enter your password' }).max(200),
});
export type LoginBody = z.infer<typeof loginBody>;

/**
 * Answered (202, no session) to every registration that did not come from an invitation sent
 * to its address, whether or not the address already has an account: a new address gets a
 * link that makes the account, a taken one a note to its owner.
 */
export const registerMessage =
  'Check your mail: the next step is on its way to that address. A link to finish your account works once, for 24 hours.';

/** An answer that is words for the person only: a mail is on its way, a password changed. */
export const messageAnswer = z.object({ message: z.string() });

export const registerMailed = messageAnswer;

export const emailConfirmBody = z.object({ token: z.string().min(20).max(200) });

export const passwordResetBody = registerBody.pick({ email: true });
export const passwordResetConfirmBody = z.object({
  token: z.string().min(20).max(200),
  password,
});

export const sessionResponse = z.object({
  user: user.nullable(),
  csrfToken: z.string(),
});
export type SessionResponse = z.infer<typeof sessionResponse>;

/** POST /register: signed in at once (an invitation sent to this address), or a mail to check. */
export const registerAnswer = z.union([sessionResponse, registerMailed]);

/** Answered to password-reset requests whether or not the address has an account. */
export const passwordResetMessage =
  'If that address has an account, a reset link is on its way. It works once, for one hour.';
