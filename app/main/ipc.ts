import type { z } from 'zod';
import type { EventChannel, EventChannels, InvokeArgs, InvokeChannel, InvokeResult } from './ipc-contract.ts';
import { INVOKE_ARGS } from './ipc-schema.ts';

/** A message from the renderer that is not in the contract; the renderer sees its text. */
export class IpcValidationError extends Error {
  override readonly name = 'IpcValidationError';
}

export type IpcCall = { [C in InvokeChannel]: { channel: C; args: InvokeArgs<C> } }[InvokeChannel];

/** Every channel of the contract, from its one declaration (ipc-schema.ts). */
export const INVOKE_CHANNELS = Object.keys(INVOKE_ARGS) as InvokeChannel[];

export function isInvokeChannel(channel: unknown): channel is InvokeChannel {
  return typeof channel === 'string' && Object.hasOwn(INVOKE_ARGS, channel);
}

/** The first problem as one sentence: `engine:send message.kind ...`. */
function describe(channel: string, error: z.ZodError, arity: number): string {
  const issue = error.issues[0];
  if (!issue) return `${channel}: malformed arguments.`;
  if (issue.path.length === 0 && issue.code === 'too_big') return `${channel} takes ${arity === 0 ? 'no arguments' : 'one argument'}, got more.`;
  if (issue.path.length === 0 && issue.code === 'too_small') return `${channel} takes one argument, got none.`;
  const where = issue.path.slice(1).map(String).join('.');
  const first = arity === 1 && issue.path.length >= 1 ? ' request' : '';
  return `${channel}${first}${where ? ` ${where}` : ''} ${issue.message.replace(/^Invalid input: /, '')}.`;
}

/** Checks a renderer request against the contract: a known channel and well-formed arguments. */
export function validateIpc(channel: unknown, args: readonly unknown[]): IpcCall {
  if (!isInvokeChannel(channel)) throw new IpcValidationError(`Unknown IPC channel ${JSON.stringify(channel)}.`);
  const schema = INVOKE_ARGS[channel];
  const parsed = schema.safeParse(args);
  if (!parsed.success) throw new IpcValidationError(describe(channel, parsed.error, schema.def.items.length));
  return { channel, args: parsed.data } as IpcCall;
}

export type IpcHandlers<Context> = {
  [C in InvokeChannel]: (context: Context, ...args: InvokeArgs<C>) => Promise<InvokeResult<C>> | InvokeResult<C>;
};

/** The part of Electron's ipcMain used here. */
export interface IpcMainLike<Event> {
  handle(channel: string, listener: (event: Event, ...args: unknown[]) => unknown): void;
}

/**
 * Registers a handler for each channel of the contract and nothing else. Every call is checked for
 * its sender (`trusted` sees the IPC event, e.g. the sending frame's URL) and its arguments first.
 */
export function registerIpc<Event>(ipcMain: IpcMainLike<Event>, handlers: IpcHandlers<Event>, trusted: (event: Event) => boolean): void {
  for (const channel of INVOKE_CHANNELS) {
    ipcMain.handle(channel, (event, ...args) => {
      if (!trusted(event)) throw new IpcValidationError(`${channel}: the request did not come from the app's own page.`);
      return dispatch(handlers, event, validateIpc(channel, args));
    });
  }
}

export function dispatch<Context>(handlers: IpcHandlers<Context>, context: Context, call: IpcCall): unknown {
  const handler = handlers[call.channel] as (context: Context, ...args: readonly unknown[]) => unknown;
  return handler(context, ...call.args);
}

/** The part of webContents used to push events to the renderer. */
export interface RendererTarget {
  isDestroyed(): boolean;
  send(channel: string, payload: unknown): void;
}

export function sendEvent<C extends EventChannel>(target: RendererTarget, channel: C, payload: EventChannels[C]): void {
  if (!target.isDestroyed()) target.send(channel, payload);
}
