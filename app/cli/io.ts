/** What a command may touch of its process; main.ts passes the real process, tests pass buffers. */
export interface OutStream {
  write(text: string): unknown;
  readonly isTTY?: boolean;
}

export interface CliIo {
  readonly stdout: OutStream;
  readonly stderr: OutStream;
  readonly env: Readonly<Record<string, string | undefined>>;
  readonly cwd: string;
  /** Aborted when the user interrupts the command (Ctrl-C); long commands stop at the next chance. */
  readonly signal?: AbortSignal;
}

/** Colour on a terminal only, and never when NO_COLOR is set to a non-empty value (no-color.org). */
export function useColour(stream: OutStream, env: CliIo['env']): boolean {
  return stream.isTTY === true && !env.NO_COLOR && env.TERM !== 'dumb';
}
