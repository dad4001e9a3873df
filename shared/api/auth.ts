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
});
export type RegisterBody = z.infer<typeof registerBody>;

export const loginBody = z.object({
  email,
  password: z.string().min(1, { message: 'Enter your password' }).max(200),
});
export type LoginBody = z.infer<typeof loginBody>;

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

/** Answered to password-reset requests whether or not the address has an account. */
export const passwordResetMessage =
  'If that address has an account, a reset link is on its way. It works once, for one hour.';
