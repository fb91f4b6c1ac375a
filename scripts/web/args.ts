export interface WebArgs {
  /** 0 picks a free port. */
  port: number;
  /** Also run the native engine host behind a WebSocket. */
  hosted: boolean;
  /** Rebuild dist/renderer before serving. */
  build: boolean;
  /** Folders where hosted mode finds a picked or dropped file by its name (given only when passed). */
  logs?: string[];
}

export const DEFAULT_PORT = 5178;

export const WEB_USAGE = `Usage: npm run web -- [--port N] [--host] [--no-build]
  --port N     listen on 127.0.0.1:N (default ${DEFAULT_PORT}; 0 picks a free port)
  --host       also run the native engine (reads Parquet) behind a token-protected WebSocket
  --no-build   serve the existing dist/renderer without rebuilding it
  --logs DIR   with --host: a folder where a picked or dropped log is found by its name (repeatable;
               default: the folder the server was started in; the demo folder is always searched last).
               The engine opens files in these folders only, by bare name; links out of them are refused`;

export class UsageError extends Error {
  override readonly name = 'UsageError';
}

export function parseWebArgs(argv: readonly string[]): WebArgs {
  const args: WebArgs = { port: DEFAULT_PORT, hosted: false, build: true };
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i] ?? '';
    const [flag, inline] = arg.startsWith('--') && arg.includes('=') ? [arg.slice(0, arg.indexOf('=')), arg.slice(arg.indexOf('=') + 1)] : [arg, undefined];
    switch (flag) {
      case '--help':
      case '-h':
        throw new UsageError(WEB_USAGE);
      case '--host':
        args.hosted = true;
        break;
      case '--no-build':
        args.build = false;
        break;
      case '--logs': {
        const value = inline ?? argv[++i];
        if (value === undefined || value === '' || value.startsWith('--')) throw new UsageError(`--logs needs a folder, got ${value === undefined ? 'nothing' : JSON.stringify(value)}.`);
        args.logs = [...(args.logs ?? []), value];
        break;
      }
      case '--port': {
        const value = inline ?? argv[++i];
        if (value === undefined || !/^\d+$/.test(value) || Number(value) > 65535) {
          throw new UsageError(`--port needs a whole number from 0 to 65535, got ${value === undefined ? 'nothing' : JSON.stringify(value)}.`);
        }
        args.port = Number(value);
        break;
      }
      default:
        throw new UsageError(`Unknown option ${JSON.stringify(arg)}.\n${WEB_USAGE}`);
    }
  }
  return args;
}
