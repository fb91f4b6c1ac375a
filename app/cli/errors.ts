/** Exit codes of the command (documented in `counterweight --help`). */
export const EXIT = { supported: 0, caveats: 1, notSupported: 2, verifyFailed: 2, usage: 3 } as const;

/** A usage or input problem: printed as one line, exit code 3, no stack trace. */
export class UsageError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'UsageError';
  }
}

/** Errors from the core and the engine that describe bad input, not a bug: shown without a stack. */
const INPUT_ERROR_NAMES = new Set(['UsageError', 'RoleError', 'TargetError', 'SettingsError', 'EngineError', 'CanonicalJsonError']);

export function isInputError(error: unknown): error is Error {
  return error instanceof Error && INPUT_ERROR_NAMES.has(error.name);
}
