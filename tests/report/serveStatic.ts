/**
 * A tiny static file server for the built report (tests only): serves `dir`
 * under the `base` prefix on 127.0.0.1, maps "…/" to "…/index.html", and
 * answers 404 for anything outside the prefix or the folder.
 */
import { createReadStream } from 'node:fs';
import { stat } from 'node:fs/promises';
import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { extname, join, normalize, sep } from 'node:path';

const TYPES: Record<string, string> = {
  '.html': 'text/html; charset=utf-8',
  '.css': 'text/css; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
  '.svg': 'image/svg+xml',
  '.png': 'image/png',
  '.json': 'application/json',
  '.csv': 'text/csv; charset=utf-8',
  '.ecsv': 'text/plain; charset=utf-8',
  '.woff2': 'font/woff2',
  '.woff': 'font/woff',
  '.ttf': 'font/ttf',
};

export interface StaticServer {
  /** Origin plus base, ending with "/". */
  url: string;
  origin: string;
  close(): Promise<void>;
}

export async function serveStatic(dir: string, base: string): Promise<StaticServer> {
  const prefix = base.endsWith('/') ? base : `${base}/`;
  const server: Server = createServer(async (req, res) => {
    const path = decodeURIComponent((req.url ?? '/').split('?')[0]!.split('#')[0]!);
    if (!path.startsWith(prefix)) {
      res.writeHead(404).end('outside the base path');
      return;
    }
    let file = normalize(join(dir, path.slice(prefix.length)));
    if (!(file + sep).startsWith(normalize(dir + sep)) && file !== normalize(dir)) {
      res.writeHead(403).end();
      return;
    }
    try {
      let s = await stat(file);
      if (s.isDirectory()) {
        file = join(file, 'index.html');
        s = await stat(file);
      }
      res.writeHead(200, { 'content-type': TYPES[extname(file)] ?? 'application/octet-stream', 'content-length': s.size });
      createReadStream(file).pipe(res);
    } catch {
      res.writeHead(404).end('not found');
    }
  });
  await new Promise<void>((ok) => server.listen(0, '127.0.0.1', ok));
  const { port } = server.address() as AddressInfo;
  const origin = `http://127.0.0.1:${port}`;
  return {
    url: `${origin}${prefix}`,
    origin,
    close: () => new Promise<void>((ok) => server.close(() => ok())),
  };
}
