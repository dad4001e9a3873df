import { eq, sql } from 'drizzle-orm';
import type { ClientRateLimitInfo, Options, Store } from 'express-rate-limit';
import type { Db } from './client';
import { oneRow } from './rows';
import { rateLimits } from './schema';

/**
 * An express-rate-limit store in PostgreSQL, so every app instance on one database counts
 * the same failures. One upsert per hit; an expired window restarts at 1.
 */
export class PostgresRateLimitStore implements Store {
  // Counters are shared between instances: the limiter must not assume it owns them.
  localKeys = false;
  private windowMs = 60_000;

  constructor(
    private readonly db: Db,
    readonly prefix: string,
  ) {}

  init(options: Options) {
    this.windowMs = options.windowMs;
  }

  private key(key: string) {
    return `${this.prefix}:${key}`;
  }

  async get(key: string): Promise<ClientRateLimitInfo | undefined> {
    const [row] = await this.db
      .select()
      .from(rateLimits)
      .where(sql`${rateLimits.key} = ${this.key(key)} and ${rateLimits.resetAt} > now()`);
    return row ? { totalHits: row.hits, resetTime: row.resetAt } : undefined;
  }

  async increment(key: string): Promise<ClientRateLimitInfo> {
    const window = sql`now() + ${`${this.windowMs} milliseconds`}::interval`;
    const expired = sql`${rateLimits.resetAt} <= now()`;
    const rows = await this.db
      .insert(rateLimits)
      .values({ key: this.key(key), hits: 1, resetAt: window })
      .onConflictDoUpdate({
        target: rateLimits.key,
        set: {
          hits: sql`case when ${expired} then 1 else ${rateLimits.hits} + 1 end`,
          resetAt: sql`case when ${expired} then ${window} else ${rateLimits.resetAt} end`,
        },
      })
      .returning();
    const row = oneRow(rows, 'count a hit');
    return { totalHits: row.hits, resetTime: row.resetAt };
  }

  async decrement(key: string) {
    await this.db
      .update(rateLimits)
      .set({ hits: sql`greatest(${rateLimits.hits} - 1, 0)` })
      .where(eq(rateLimits.key, this.key(key)));
  }

  async resetKey(key: string) {
    await this.db.delete(rateLimits).where(eq(rateLimits.key, this.key(key)));
  }
}
