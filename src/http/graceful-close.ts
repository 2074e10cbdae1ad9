import type { Server, ServerResponse } from 'node:http';

/**
 * Closing the HTTP server on SIGTERM without dropping hook calls in flight: stop listening at once
 * (new connections are refused), let calls in flight finish and answer with `Connection: close`
 * (RFC 9112 §9.6), close each connection as it goes idle, and cut whatever is still open when the
 * deadline passes. `server.close()` alone would wait for keep-alive connections to time out.
 */

export interface CloseOutcome {
  /** Connections were still busy at the deadline and were cut. */
  readonly forced: boolean;
}

export type CloseGracefully = () => Promise<CloseOutcome>;

/** Call once, right after the server starts listening; the function it returns does the closing. */
export function prepareGracefulClose(server: Server, graceMs: number): CloseGracefully {
  const open = new Set<ServerResponse>();
  let closing = false;
  server.on('request', (_req, res: ServerResponse) => {
    // A request that came on a kept-alive connection after closing began: answer it, then hang up.
    if (closing && !res.headersSent) {
      res.setHeader('Connection', 'close');
    }
    open.add(res);
    res.once('close', () => {
      open.delete(res);
      if (closing) {
        setImmediate(() => server.closeIdleConnections());
      }
    });
  });
  let closed: Promise<CloseOutcome> | undefined;
  return () => {
    closed ??= new Promise((resolve) => {
      closing = true;
      for (const res of open) {
        if (!res.headersSent) {
          res.setHeader('Connection', 'close');
        }
      }
      let forced = false;
      const force = setTimeout(() => {
        forced = true;
        server.closeAllConnections();
      }, graceMs);
      force.unref();
      server.close(() => {
        clearTimeout(force);
        resolve({ forced });
      });
      server.closeIdleConnections();
    });
    return closed;
  };
}
