import { sql } from 'drizzle-orm';
import express from 'express';
import net from 'node:net';
import pg from 'pg';
import request from 'supertest';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { connect } from '../../../../server/db/client';
import {
  errorHandler,
  isDatabaseUnavailable,
  isStorageUnavailable,
} from '../../../../server/http/errors';
import { createS3Storage } from '../../../../server/storage';
import { parseQuantity } from '../../../../shared/engine/quantity';
import { freePort } from '../../../helpers/net';

/** The error node-postgres raises when connecting to `port` fails. */
async function connectError(port: number): Promise<Error> {
  const client = new pg.Client({ host: '127.0.0.1', port, user: 'postgres', database: 'x' });
  client.on('error', () => {});
  return client.connect().then(
    () => {
      throw new Error('connected');
    },
    (err: Error) => err,
  );
}

/** A TCP server on loopback doing `onConnection` with each socket; closed after the test. */
const servers: net.Server[] = [];
async function fakeServer(onConnection: (socket: net.Socket) => void): Promise<number> {
  const server = net.createServer(onConnection);
  servers.push(server);
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  return (server.address() as net.AddressInfo).port;
}
afterEach(async () => {
  await Promise.all(servers.splice(0).map((s) => new Promise((r) => s.close(r))));
  vi.restoreAllMocks();
});

/** A PostgreSQL ErrorResponse message (protocol 3.0, "Message Formats"): severity, code, text. */
function errorResponse(code: string, message: string): Buffer {
  const fields = Buffer.concat([
    ...[
      ['S', 'FATAL'],
      ['V', 'FATAL'],
      ['C', code],
      ['M', message],
    ].map(([k, v]) => Buffer.from(`${k}${v}\0`)),
    Buffer.from('\0'),
  ]);
  const head = Buffer.alloc(5);
  head.write('E', 0);
  head.writeInt32BE(fields.length + 4, 1);
  return Buffer.concat([head, fields]);
}

describe('isDatabaseUnavailable, on the errors node-postgres really raises', () => {
  it('nothing listening (ECONNREFUSED)', async () => {
    const err = await connectError(await freePort());
    expect((err as NodeJS.ErrnoException).code).toBe('ECONNREFUSED');
    expect(isDatabaseUnavailable(err)).toBe(true);
  });

  it('the connection closed under it ("Connection terminated unexpectedly", no code)', async () => {
    const port = await fakeServer((socket) => socket.destroy());
    const err = await connectError(port);
    expect(err.message).toBe('Connection terminated unexpectedly');
    expect(isDatabaseUnavailable(err)).toBe(true);
  });

  it('a server shutting down or starting up (SQLSTATE 57P03) or ending sessions (57P01)', async () => {
    for (const [code, text] of [
      ['57P03', 'the database system is shutting down'],
      ['57P01', 'terminating connection due to administrator command'],
    ] as const) {
      const port = await fakeServer((socket) =>
        socket.once('data', () => socket.end(errorResponse(code, text))),
      );
      const err = await connectError(port);
      expect((err as { code?: string }).code).toBe(code);
      expect(isDatabaseUnavailable(err)).toBe(true);
    }
  });

  it('the same failures wrapped by Drizzle (the cause is looked at)', async () => {
    const { db, pool } = connect(`postgres://postgres@127.0.0.1:${await freePort()}/x`, 1);
    const err = await db.execute(sql`select 1`).then(
      () => undefined,
      (e: Error) => e,
    );
    await pool.end();
    expect(err).toBeInstanceOf(Error);
    expect(isDatabaseUnavailable(err)).toBe(true);
  });

  it('is false for errors that are not about reaching the database', () => {
    const unique = Object.assign(new Error('duplicate key value'), { code: '23505' });
    expect(isDatabaseUnavailable(unique)).toBe(false);
    expect(isDatabaseUnavailable(new Error('Failed query', { cause: unique }))).toBe(false);
    expect(isDatabaseUnavailable(new TypeError('x is undefined'))).toBe(false);
    expect(isDatabaseUnavailable(undefined)).toBe(false);
  });
});

/** A small app with the error handler behind a few routes that fail in known ways. */
function appWith(production: boolean) {
  const app = express();
  app.use(express.json());
  app.get('/boom', () => {
    throw new Error('secret detail from /srv/fairsheet/server/x.ts');
  });
  app.get('/db', async () => {
    throw await connectError(0);
  });
  app.get('/items/:id', (req, res) => {
    res.json({ id: req.params.id });
  });
  app.post('/echo', (req, res) => {
    res.json(req.body);
  });
  app.get('/late', (_req, res) => {
    res.json({ whole: true });
    throw new Error('after the answer was sent');
  });
  app.use(errorHandler({ production }));
  return app;
}

describe('errorHandler', () => {
  it('in production an unknown error answers {error:{code:"internal"}} with no stack or detail, and logs only its message', async () => {
    const logged: unknown[][] = [];
    vi.spyOn(console, 'error').mockImplementation((...args) => logged.push(args));
    const res = await request(appWith(true)).get('/boom');
    expect(res.status).toBe(500);
    expect(res.headers['content-type']).toMatch(/^application\/json/);
    expect(res.body).toEqual({
      error: { code: 'internal', message: 'Something went wrong on the server.' },
    });
    expect(res.text).not.toMatch(/secret|\/srv\/|at .*\.ts/);
    expect(logged).toEqual([
      ['[server] unexpected error:', 'secret detail from /srv/fairsheet/server/x.ts'],
    ]);
  });

  it('outside production the body is the same; the stack goes to the log only', async () => {
    const logged: unknown[][] = [];
    vi.spyOn(console, 'error').mockImplementation((...args) => logged.push(args));
    const res = await request(appWith(false)).get('/boom');
    expect(res.body).toEqual({
      error: { code: 'internal', message: 'Something went wrong on the server.' },
    });
    expect(res.text).not.toMatch(/secret|at .*\.ts/);
    expect((logged[0]![1] as Error).stack).toMatch(/secret detail/);
  });

  it('a database that cannot be reached answers 503 unavailable with Retry-After, and is not logged as unexpected', async () => {
    const spy = vi.spyOn(console, 'error').mockImplementation(() => {});
    const res = await request(appWith(true)).get('/db');
    expect(res.status).toBe(503);
    expect(res.headers['retry-after']).toBe('5');
    expect(res.body.error.code).toBe('unavailable');
    expect(spy).not.toHaveBeenCalled();
  });

  it('a malformed body or %-escape answers 400 bad_request in JSON, not 500', async () => {
    vi.spyOn(console, 'error').mockImplementation(() => {});
    const app = appWith(true);
    const json = await request(app).post('/echo').set('Content-Type', 'application/json').send('{');
    expect(json.status).toBe(400);
    expect(json.body.error.code).toBe('bad_request');
    const escape = await request(app).get('/items/%E0%A4%A');
    expect(escape.status).toBe(400);
    expect(escape.body.error.code).toBe('bad_request');
    expect(escape.text).not.toMatch(/at .*\.(ts|js)/);
  });

  it('an engine error a route did not map answers 400 bad_request with its code and location', async () => {
    const spy = vi.spyOn(console, 'error').mockImplementation(() => {});
    const app = express();
    app.get('/quantity', () => {
      parseQuantity('3/0'); // a zero denominator, refused at offset 2
    });
    app.use(errorHandler({ production: true }));
    const res = await request(app).get('/quantity');
    expect(res.status).toBe(400);
    expect(res.body.error).toEqual({
      code: 'bad_request',
      message: 'a fraction needs a whole denominator greater than 0',
      details: { engineCode: 'bad-quantity', at: 2 },
    });
    expect(spy).not.toHaveBeenCalled();
  });

  it('an error after the answer was sent leaves that answer whole', async () => {
    const logged: unknown[][] = [];
    vi.spyOn(console, 'error').mockImplementation((...args) => logged.push(args));
    const res = await request(appWith(true)).get('/late');
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ whole: true });
    expect(logged).toEqual([['[server] error after the answer:', 'after the answer was sent']]);
  });
});

describe('a file storage that cannot be reached', () => {
  /** The error the real S3 client raises, after its retries, when nothing listens. */
  async function bucketError(): Promise<Error> {
    const storage = createS3Storage({
      bucket: 'absent',
      endpoint: `http://127.0.0.1:${await freePort()}`,
      region: 'us-east-1',
      credentials: { accessKeyId: 'x', secretAccessKey: 'y' },
      forcePathStyle: true,
    });
    return storage.exists('0'.repeat(64)).then(
      () => {
        throw new Error('the bucket answered');
      },
      (err: Error) => err,
    );
  }

  it('is told from a database outage, and answers 503 naming the file storage', async () => {
    const err = await bucketError();
    expect(isDatabaseUnavailable(err)).toBe(false);
    expect(isStorageUnavailable(err)).toBe(true);
    const logged: unknown[][] = [];
    vi.spyOn(console, 'error').mockImplementation((...args) => logged.push(args));
    const app = express();
    app.get('/file', () => {
      throw err;
    });
    app.use(errorHandler({ production: true }));
    const res = await request(app).get('/file');
    expect(res.status).toBe(503);
    expect(res.headers['retry-after']).toBe('5');
    expect(res.body.error).toEqual({
      code: 'unavailable',
      message: 'The file storage is not answering. Try again in a moment.',
    });
    expect(logged[0]![0]).toBe('[server] file storage not answering:');
  }, 60_000);
});
