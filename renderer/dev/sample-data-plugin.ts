import { createReadStream } from 'node:fs';
import { stat } from 'node:fs/promises';
import path from 'node:path';
import type { ServerResponse } from 'node:http';
import type { Plugin } from 'vite';

const SERVED = /^[a-z0-9][a-z0-9.-]*\.(csv|json|ndjson|parquet)$/i;
const TYPES: Record<string, string> = { '.csv': 'text/csv; charset=utf-8', '.json': 'application/json', '.ndjson': 'application/x-ndjson', '.parquet': 'application/vnd.apache.parquet' };

/**
 * Serves the committed demo logs at /sample-data/<file> in the dev and preview servers, so "Open the demo
 * log" can fetch them; they are not copied into the renderer build (the desktop app opens them by path).
 */
export function sampleDataPlugin(folder: string): Plugin {
  const serve = (server: { middlewares: { use: (fn: (req: { url?: string }, res: ServerResponse, next: () => void) => void) => void } }) => {
    server.middlewares.use((req, res, next) => {
      const match = /^\/sample-data\/([^?#]+)/.exec(req.url ?? '');
      const name = match?.[1] ? decodeURIComponent(match[1]) : null;
      if (!name) { next(); return; }
      if (!SERVED.test(name)) { res.statusCode = 404; res.end('not a demo file'); return; }
      const file = path.join(folder, name);
      stat(file).then((info) => {
        res.setHeader('Content-Type', TYPES[path.extname(name).toLowerCase()] ?? 'application/octet-stream');
        res.setHeader('Content-Length', String(info.size));
        createReadStream(file).pipe(res);
      }, () => { res.statusCode = 404; res.end('no such demo file'); });
    });
  };
  return { name: 'counterweight-sample-data', configureServer: serve, configurePreviewServer: serve };
}
