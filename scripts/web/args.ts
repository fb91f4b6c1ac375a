export interface WebArgs {
  /** 0 picks a free port. */
  port: number;
  /** Also run the native engine host behind a WebSocket. */
  hosted: boolean;
  /** Rebuild dist/renderer before serving. */
  build: boolean;
}

export const DEFAULT_PORT = 5178;

export const WEB_USAGE = `Usage: npm run web -- [--port N] [--host] [--no-build]
  --port N     listen on 127.0.0.1:N (default ${DEFAULT_PORT}; 0 picks a free port)
  --host       also run the native engine (reads Parquet) behind a token-protected WebSocket
  --no-build   serve the existing dist/renderer without rebuilding it`;

export class UsageError extends Error {
  override readonly name = 'UsageError';
}

export function parseWebArgs(argv: readonly string[]): WebArgs {
  const args: WebArgs = { port: DEFAULT_PORT, hosted: false, build: true };
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i] ?? '';
    const [flag, inline] = arg.startsWith('--') && arg.includes('=') ? [arg.slice(0, arg.indexOf('=')), arg.slice(arg.indexOf('=') + 1)] : [arg, undefined];
    switch (flag) {
      case '--host':
        args.hosted = true;
        break;
      case '--no-build':
        args.build = false;
        break;
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
