/** Exit codes of the command (documented in `counterweight --help`). */
export const EXIT = { supported: 0, caveats: 1, notSupported: 2, verifyFailed: 2, usage: 3, interrupted: 130 } as const;

/** The command was interrupted (Ctrl-C or SIGTERM) and stopped without writing a report. */
export class InterruptedError extends Error {
  constructor() {
    super('interrupted: the audit was stopped before it finished; no report was written.');
    this.name = 'InterruptedError';
  }
}

/** A cancellation seen from the engine or the core after the command's signal was aborted. */
export function isCancellation(error: unknown): boolean {
  if (!(error instanceof Error)) return false;
  return error.name === 'InterruptedError' || error.name === 'AuditCancelled' || (error.name === 'EngineError' && (error as Error & { code?: string }).code === 'cancelled');
}

/** A usage or input problem: printed as one line, exit code 3, no stack trace. */
export class UsageError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'UsageError';
  }
}

/** Errors from the core and the engine that describe bad input, not a bug: shown without a stack. */
const INPUT_ERROR_NAMES = new Set(['UsageError', 'RoleError', 'TargetError', 'SettingsError', 'EngineError', 'CanonicalJsonError', 'EmptyLogError', 'PlanError', 'PartsError']);

export function isInputError(error: unknown): error is Error {
  return error instanceof Error && INPUT_ERROR_NAMES.has(error.name);
}
