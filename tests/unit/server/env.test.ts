import { describe, expect, it } from 'vitest';
import { loadEnv } from '../../../server/env';

describe('loadEnv', () => {
  it('gives the documented defaults for an empty environment', () => {
    const env = loadEnv({});
    expect(env).toMatchObject({
      PORT: 3000,
      FAIRSHEET_DATA_DIR: '.data',
      FAIRSHEET_PG_PORT: 54329,
      FAIRSHEET_SMTP_PORT: 2525,
      NODE_ENV: 'development',
      FAIRSHEET_SEED_DEMO: true,
    });
    expect(env.DATABASE_URL).toBeUndefined();
  });

  it('reads the overrides that let two copies run side by side', () => {
    const env = loadEnv({
      PORT: '3001',
      FAIRSHEET_PG_PORT: '54330',
      FAIRSHEET_SMTP_PORT: '2526',
      FAIRSHEET_DATA_DIR: '.data2',
    });
    expect([
      env.PORT,
      env.FAIRSHEET_PG_PORT,
      env.FAIRSHEET_SMTP_PORT,
      env.FAIRSHEET_DATA_DIR,
    ]).toEqual([3001, 54330, 2526, '.data2']);
  });

  it('names every offending variable in one error', () => {
    expect(() => loadEnv({ PORT: 'eighty', DATABASE_URL: 'not a url' })).toThrow(
      /PORT[\s\S]*DATABASE_URL|DATABASE_URL[\s\S]*PORT/,
    );
  });

  it('requires SESSION_SECRET in production', () => {
    expect(() => loadEnv({ NODE_ENV: 'production' })).toThrow(/SESSION_SECRET/);
    expect(loadEnv({ NODE_ENV: 'production', SESSION_SECRET: 'x'.repeat(32) }).NODE_ENV).toBe(
      'production',
    );
  });
});
