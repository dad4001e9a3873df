import { createServer, type RequestListener, type ServerResponse } from 'node:http';

export interface GracefulServer {
  listen(port: number, host: string): Promise<void>;
  /**
   * Stops taking connections and lets the requests in flight be answered, each answer closing
   * its connection; idle keep-alive connections are closed at once. After `graceMs` whatever
   * is left is cut off. Resolves when the server is closed, with the number of requests cut off.
   */
  shutdown(graceMs: number): Promise<{ cut: number }>;
}

/**
 * An HTTP server for the app that can stop without cutting anyone off. A request counts from
 * its arrival until the app has ended (or destroyed) its response or its connection has closed.
 * A handler whose client went away may still be using the database: the caller's pool.end(),
 * after `shutdown` resolves, waits for the clients it holds.
 */
export function createGracefulServer(app: RequestListener): GracefulServer {
  const open = new Set<ServerResponse>();
  let stopping = false;
  let whenAnswered: (() => void) | undefined;

  const server = createServer((req, res) => {
    open.add(res);
    if (stopping) res.setHeader('Connection', 'close');
    let settled = false;
    const settle = () => {
      if (settled) return;
      settled = true;
      open.delete(res);
      if (!stopping) return;
      // An answer whose headers went out before the stop kept its connection alive: close the
      // connection once it is idle.
      res.once('finish', () => setImmediate(() => server.closeIdleConnections()));
      if (open.size === 0) whenAnswered?.();
    };
    // Wrapped before the app sees the response, so express-session's own wrapper (which writes
    // the session, then ends) ends inside this one.
    const { end, destroy } = res;
    // A download the client gave up (a piped static file, an export) is neither ended nor
    // destroyed by its handler: the closed connection settles it.
    res.once('close', settle);
    res.end = function (this: ServerResponse, ...args: unknown[]) {
      settle();
      return (end as (...a: unknown[]) => ServerResponse).apply(this, args);
    } as ServerResponse['end'];
    res.destroy = function (this: ServerResponse, error?: Error) {
      settle();
      return destroy.call(this, error);
    };
    app(req, res);
  });

  return {
    listen(port, host) {
      return new Promise((resolve, reject) => {
        server.once('error', reject);
        server.listen(port, host, () => {
          server.off('error', reject);
          resolve();
        });
      });
    },

    async shutdown(graceMs) {
      stopping = true;
      for (const res of open) if (!res.headersSent) res.setHeader('Connection', 'close');
      // Stops listening and (Node 19 and later) closes the idle keep-alive connections; calls
      // back once every connection is gone.
      const closed = new Promise<void>((resolve) => server.close(() => resolve()));
      const answered = new Promise<void>((resolve) => {
        whenAnswered = resolve;
        if (open.size === 0) resolve();
      });
      let timer: NodeJS.Timeout | undefined;
      const late = new Promise<'late'>((resolve) => {
        timer = setTimeout(() => resolve('late'), graceMs);
      });
      const outcome = await Promise.race([Promise.all([closed, answered]), late]);
      clearTimeout(timer);
      if (outcome !== 'late') return { cut: 0 };
      const cut = open.size;
      server.closeAllConnections();
      await closed;
      return { cut };
    },
  };
}
