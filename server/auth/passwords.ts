import bcrypt from 'bcryptjs';

export interface PasswordHasher {
  hash(password: string): Promise<string>;
  verify(password: string, hash: string | undefined): Promise<boolean>;
}

/**
 * bcrypt at the configured cost. `verify` with no stored hash still spends one comparison,
 * so an unknown e-mail takes as long to refuse as a wrong password.
 */
export function createPasswordHasher(cost: number): PasswordHasher {
  const dummy = bcrypt.hashSync('not-a-real-password', cost);
  return {
    hash: (password) => bcrypt.hash(password, cost),
    async verify(password, hash) {
      const ok = await bcrypt.compare(password, hash ?? dummy);
      return ok && hash !== undefined;
    },
  };
}
