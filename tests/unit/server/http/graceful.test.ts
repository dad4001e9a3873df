import { request } from 'node:http';
import { PassThrough } from 'node:stream';
import { describe, expect, it } from 'vitest';
import { createGracefulServer } from '../../../../server/http/graceful';
import { freePort } from '../../../helpers/net';

describe('the graceful server', () => {
  it('a download the client abandoned does not hold up the stop, nor count as cut off', async () => {
    let piped: PassThrough | undefined;
    const server = createGracefulServer((_req, res) => {
      // A long download, piped as express.static does: the handler never ends it itself.
      piped = new PassThrough();
      res.writeHead(200, { 'Content-Type': 'application/octet-stream' });
      piped.write(Buffer.alloc(1024));
      piped.pipe(res);
    });
    const port = await freePort();
    await server.listen(port, '127.0.0.1');

    await new Promise<void>((resolve, reject) => {
      const req = request({ host: '127.0.0.1', port, path: '/file' }, (res) => {
        res.once('data', () => {
          // The reader goes away mid-file.
          req.destroy();
          resolve();
        });
      });
      req.on('error', () => {});
      req.once('error', reject);
      req.end();
    });

    const { cut } = await server.shutdown(3000);
    expect(cut).toBe(0);
    piped?.destroy();
  });

  it('a request still being answered when the stop begins is answered in full', async () => {
    let finish: (() => void) | undefined;
    const server = createGracefulServer((_req, res) => {
      finish = () => res.end('done');
    });
    const port = await freePort();
    await server.listen(port, '127.0.0.1');
    const answer = new Promise<string>((resolve, reject) => {
      const req = request({ host: '127.0.0.1', port, path: '/slow' }, (res) => {
        let body = '';
        res.on('data', (c: Buffer) => (body += c.toString()));
        res.on('end', () => resolve(body));
      });
      req.once('error', reject);
      req.end();
    });
    while (!finish) await new Promise((r) => setTimeout(r, 10));
    const stopped = server.shutdown(10_000);
    finish();
    expect(await answer).toBe('done');
    expect((await stopped).cut).toBe(0);
  });
});
