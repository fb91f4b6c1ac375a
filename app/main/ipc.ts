import { parseHostRequest } from './host-messages.ts';
import {
  type EventChannel,
  type EventChannels,
  INVOKE_CHANNELS,
  type InvokeArgs,
  type InvokeChannel,
  type InvokeResult,
  type PrintRequest,
  type SaveReportRequest,
} from './ipc-contract.ts';

/** A message from the renderer that is not in the contract; the renderer sees its text. */
export class IpcValidationError extends Error {
  override readonly name = 'IpcValidationError';
}

export type IpcCall = { [C in InvokeChannel]: { channel: C; args: InvokeArgs<C> } }[InvokeChannel];

const MAX_PATHS = 1_000;
const MAX_PATH_CHARS = 4_096;
const MAX_NAME_CHARS = 255;
/** A report with every finding's example rows stays far below this. */
export const MAX_REPORT_CHARS = 256 * 1024 * 1024;

type Validator<C extends InvokeChannel> = (args: readonly unknown[], channel: C) => InvokeArgs<C>;

const VALIDATORS: { [C in InvokeChannel]: Validator<C> } = {
  'launch:log': (args, channel) => noArgs(args, channel),
  'log:choose': (args, channel) => noArgs(args, channel),
  'recent:list': (args, channel) => noArgs(args, channel),
  'recent:add': (args, channel) => [pathList(single(args, channel), `${channel} paths`)],
  'target-table:choose': (args, channel) => noArgs(args, channel),
  'report:save': (args, channel) => [saveReportRequest(single(args, channel), channel)],
  'report:print-pdf': (args, channel) => [printRequest(single(args, channel), channel)],
  'engine:send': (args, channel) => [parseHostRequest(single(args, channel))],
  'engine:status': (args, channel) => noArgs(args, channel),
};

export function isInvokeChannel(channel: unknown): channel is InvokeChannel {
  return typeof channel === 'string' && (INVOKE_CHANNELS as readonly string[]).includes(channel);
}

/** Checks a renderer request against the contract: a known channel and well-formed arguments. */
export function validateIpc(channel: unknown, args: readonly unknown[]): IpcCall {
  if (!isInvokeChannel(channel)) throw new IpcValidationError(`Unknown IPC channel ${JSON.stringify(channel)}.`);
  const validator = VALIDATORS[channel] as Validator<InvokeChannel>;
  try {
    return { channel, args: validator(args, channel) } as IpcCall;
  } catch (error) {
    if (error instanceof IpcValidationError) throw error;
    throw new IpcValidationError(`${channel}: ${error instanceof Error ? error.message : String(error)}`);
  }
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

function noArgs(args: readonly unknown[], channel: string): [] {
  if (args.length !== 0) throw new IpcValidationError(`${channel} takes no arguments, got ${args.length}.`);
  return [];
}

function single(args: readonly unknown[], channel: string): unknown {
  if (args.length !== 1) throw new IpcValidationError(`${channel} takes one argument, got ${args.length}.`);
  return args[0];
}

function record(value: unknown, what: string, allowed: readonly string[]): Record<string, unknown> {
  if (typeof value !== 'object' || value === null || Array.isArray(value)) throw new IpcValidationError(`${what} must be an object.`);
  const unknownKey = Object.keys(value).find((key) => !allowed.includes(key));
  if (unknownKey !== undefined) throw new IpcValidationError(`${what} has an unknown field ${JSON.stringify(unknownKey)}.`);
  return value as Record<string, unknown>;
}

function text(value: unknown, what: string, maxChars: number): string {
  if (typeof value !== 'string') throw new IpcValidationError(`${what} must be a string.`);
  if (value.length > maxChars) throw new IpcValidationError(`${what} is longer than ${maxChars} characters.`);
  return value;
}

function fileName(value: unknown, what: string): string | undefined {
  if (value === undefined) return undefined;
  const name = text(value, what, MAX_NAME_CHARS);
  if (name.includes('\0')) throw new IpcValidationError(`${what} contains a NUL character.`);
  return name;
}

function pathList(value: unknown, what: string): string[] {
  if (!Array.isArray(value) || value.length === 0 || value.length > MAX_PATHS) {
    throw new IpcValidationError(`${what} must be a list of 1 to ${MAX_PATHS} paths.`);
  }
  return value.map((item, i) => {
    const p = text(item, `${what}[${i}]`, MAX_PATH_CHARS);
    if (p === '' || p.includes('\0')) throw new IpcValidationError(`${what}[${i}] must be a non-empty path without NUL characters.`);
    return p;
  });
}

function saveReportRequest(value: unknown, channel: string): SaveReportRequest {
  const v = record(value, `${channel} request`, ['format', 'contents', 'suggestedName']);
  if (v.format !== 'json' && v.format !== 'html') throw new IpcValidationError(`${channel} format must be "json" or "html", got ${JSON.stringify(v.format)}.`);
  const contents = text(v.contents, `${channel} contents`, MAX_REPORT_CHARS);
  const suggestedName = fileName(v.suggestedName, `${channel} suggestedName`);
  return { format: v.format, contents, ...(suggestedName === undefined ? {} : { suggestedName }) };
}

function printRequest(value: unknown, channel: string): PrintRequest {
  const v = record(value, `${channel} request`, ['suggestedName']);
  const suggestedName = fileName(v.suggestedName, `${channel} suggestedName`);
  return suggestedName === undefined ? {} : { suggestedName };
}

/** The part of webContents used to push events to the renderer. */
export interface RendererTarget {
  isDestroyed(): boolean;
  send(channel: string, payload: unknown): void;
}

export function sendEvent<C extends EventChannel>(target: RendererTarget, channel: C, payload: EventChannels[C]): void {
  if (!target.isDestroyed()) target.send(channel, payload);
}
