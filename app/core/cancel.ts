/**
 * What the audit and the engines need of a cancellation signal: a flag, and a way to hear it change.
 * A DOM or Node AbortSignal is one; the core names only this much of it, so it compiles without either.
 */
export interface CancelSignal {
  readonly aborted: boolean;
  addEventListener(type: 'abort', listener: () => void, options?: { readonly once?: boolean }): void;
  removeEventListener(type: 'abort', listener: () => void): void;
}
