import { existsSync } from 'node:fs';
import path from 'node:path';
import { buildRenderer, RENDERER_OUT_DIR, ROOT } from '../../electron.config.ts';
import { newToken } from './access.ts';
import { parseWebArgs, UsageError } from './args.ts';
import { createHostedServer } from './hosted-server.ts';

function fail(message: string): never {
  process.stderr.write(`${message}\n`);
  process.exit(1);
}

export async function main(argv: readonly string[]): Promise<void> {
  let args;
  try {
    args = parseWebArgs(argv);
  } catch (error) {
    if (error instanceof UsageError) fail(error.message);
    throw error;
  }
  const staticRoot = path.join(ROOT, RENDERER_OUT_DIR);
  if (args.build) {
    process.stdout.write('Building the renderer...\n');
    try {
      await buildRenderer(ROOT);
    } catch (error) {
      fail(`The renderer build failed: ${error instanceof Error ? error.message : String(error)}`);
    }
  } else if (!existsSync(path.join(staticRoot, 'index.html'))) {
    fail(`There is no built renderer in ${RENDERER_OUT_DIR}/; run without --no-build.`);
  }

  // The demo folder is always searched last, so "Open the demo log" works with any --logs.
  const demo = path.join(ROOT, 'sample-data');
  const logFolders = [...new Set([...(args.logs ?? [process.cwd()]), demo].map((f) => path.resolve(f)))];
  let server;
  try {
    server = await createHostedServer({ port: args.port, token: newToken(), staticRoot, demoFolder: path.join(ROOT, 'sample-data'), engine: args.hosted, logFolders });
  } catch (error) {
    const code = (error as { code?: string }).code;
    if (code === 'EADDRINUSE') fail(`Port ${args.port} is in use; pass --port N (0 picks a free port).`);
    fail(`The server could not start: ${error instanceof Error ? error.message : String(error)}`);
  }
  const engine = args.hosted
    ? 'Engine: native DuckDB on this computer, behind a WebSocket only this page can open (the token changes at every start).\n'
      + `A picked or dropped log is found by its name in: ${logFolders.join(', ')} (files in these folders only; no paths).`
    : 'Engine: DuckDB-Wasm in the browser (CSV, TSV, NDJSON). Pass --host to read Parquet with the native engine.';
  process.stdout.write(`Counterweight is serving on 127.0.0.1 only.\n${engine}\nOpen: ${server.url}\nPress Ctrl+C to stop.\n`);

  const stop = (): void => {
    void server.close().finally(() => process.exit(0));
  };
  process.once('SIGINT', stop);
  process.once('SIGTERM', stop);
}
