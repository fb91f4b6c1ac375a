/**
 * Our flags on node:util's parseArgs. Each command declares its flags; parseArgs splits the arguments
 * into tokens (its `tokens` mode, not strict, so every problem is ours to word), and the tokens are
 * checked here in order: anything undeclared is a usage error naming the flag and the command. Forms:
 * `--flag value`, `--flag=value`, boolean `--flag`, repeatable flags collect a list, `--` ends the flags.
 */
import { parseArgs as tokenize } from 'node:util';
import { UsageError } from './errors.ts';

export type FlagKind = 'string' | 'boolean' | 'list';

export interface FlagSpec {
  readonly kind: FlagKind;
  readonly choices?: readonly string[];
  /** Shown after the flag name in help and in "needs a value" errors. */
  readonly value?: string;
  readonly help: string;
}

export interface CommandSpec {
  readonly name: string;
  readonly summary: string;
  readonly positionals: { readonly name: string; readonly min: number; readonly max: number };
  readonly flags: Readonly<Record<string, FlagSpec>>;
}

export type FlagValues = Record<string, string | boolean | string[] | undefined>;

export interface ParsedArgs {
  readonly positionals: string[];
  readonly flags: FlagValues;
}

const COMMON_FLAGS: Readonly<Record<string, FlagSpec>> = {
  debug: { kind: 'boolean', help: 'print stack traces of unexpected errors' },
  help: { kind: 'boolean', help: 'show help for this command' },
};

export function parseArgs(spec: CommandSpec, argv: readonly string[]): ParsedArgs {
  const flags: FlagValues = {};
  const positionals: string[] = [];
  const all = { ...COMMON_FLAGS, ...spec.flags };
  const options = Object.fromEntries(Object.entries(all).map(([name, f]) => [name, f.kind === 'boolean' ? { type: 'boolean' as const, ...(name === 'help' ? { short: 'h' } : {}) } : { type: 'string' as const }]));
  const { tokens } = tokenize({ args: [...argv], options, allowPositionals: true, strict: false, tokens: true });
  for (const token of tokens) {
    if (token.kind === 'positional') {
      positionals.push(token.value);
      continue;
    }
    if (token.kind === 'option-terminator') continue;
    const { name, rawName } = token;
    if (!rawName.startsWith('--') && name !== 'help') throw new UsageError(`unknown option ${rawName} for '${spec.name}' (options are long, like --json; see counterweight ${spec.name} --help)`);
    const flag = Object.hasOwn(all, name) ? all[name] : undefined;
    if (!flag) throw new UsageError(`unknown option --${name} for '${spec.name}'${suggest(name, Object.keys(all))} (see counterweight ${spec.name} --help)`);
    if (flag.kind === 'boolean') {
      if (token.inlineValue) throw new UsageError(`--${name} takes no value`);
      flags[name] = true;
      continue;
    }
    // parseArgs takes the next argument as the value whatever it is; a flag there means the value is missing.
    const value = token.value;
    if (value === undefined || (!token.inlineValue && value.startsWith('--') && value.length > 2)) {
      throw new UsageError(`--${name} needs a value${flag.value ? ` (${flag.value})` : ''}`);
    }
    if (value === '') throw new UsageError(`--${name} needs a non-empty value${flag.value ? ` (${flag.value})` : ''}`);
    if (flag.choices && !flag.choices.includes(value)) {
      throw new UsageError(`--${name} must be ${listOr(flag.choices)}, got '${value}'`);
    }
    if (flag.kind === 'list') {
      const list = (flags[name] as string[] | undefined) ?? [];
      list.push(value);
      flags[name] = list;
    } else {
      if (flags[name] !== undefined) throw new UsageError(`--${name} given twice`);
      flags[name] = value;
    }
  }
  if (flags.help) return { positionals, flags };
  const { min, max } = spec.positionals;
  if (positionals.length < min) throw new UsageError(`'${spec.name}' needs ${min === 1 ? 'a' : `at least ${min}`} ${spec.positionals.name} (usage: ${usageLine(spec)})`);
  if (positionals.length > max) {
    throw new UsageError(max === 0 ? `'${spec.name}' takes no arguments, got '${positionals[0]}'` : `'${spec.name}' takes at most ${max} ${spec.positionals.name}, got ${positionals.length}: ${positionals.join(' ')}`);
  }
  return { positionals, flags };
}

function listOr(items: readonly string[]): string {
  return items.length <= 1 ? (items[0] ?? '') : `${items.slice(0, -1).join(', ')} or ${items[items.length - 1]}`;
}

/** "did you mean" for one-edit typos and prefixes (Levenshtein distance ≤ 2). */
function suggest(name: string, known: readonly string[]): string {
  const close = known.filter((k) => k.startsWith(name) || distance(k, name) <= 2);
  return close.length === 1 ? `; did you mean --${close[0]}?` : '';
}

function distance(a: string, b: string): number {
  const d: number[] = Array.from({ length: b.length + 1 }, (_, j) => j);
  for (let i = 1; i <= a.length; i++) {
    let prev = d[0] as number;
    d[0] = i;
    for (let j = 1; j <= b.length; j++) {
      const tmp = d[j] as number;
      d[j] = Math.min((d[j] as number) + 1, (d[j - 1] as number) + 1, prev + (a[i - 1] === b[j - 1] ? 0 : 1));
      prev = tmp;
    }
  }
  return d[b.length] as number;
}

function usageLine(spec: CommandSpec): string {
  const { name, min, max } = spec.positionals;
  const pos = max === 0 ? '' : min === 0 ? ` [${name}]` : max > 1 ? ` <${name}...>` : ` <${name}>`;
  return `counterweight ${spec.name}${pos} [options]`;
}

export function helpText(spec: CommandSpec): string {
  const lines = [`${usageLine(spec)}`, '', spec.summary, '', 'Options:'];
  const entries = Object.entries({ ...spec.flags, ...COMMON_FLAGS });
  const heads = entries.map(([n, f]) => `  --${n}${f.kind === 'boolean' ? '' : ` ${f.value ?? 'VALUE'}`}${f.kind === 'list' ? ' (repeatable)' : ''}`);
  const width = Math.max(...heads.map((h) => h.length)) + 2;
  entries.forEach(([, f], i) => lines.push(`${(heads[i] as string).padEnd(width)}${f.help}`));
  return `${lines.join('\n')}\n`;
}

export function stringFlag(flags: FlagValues, name: string): string | undefined {
  const v = flags[name];
  return typeof v === 'string' ? v : undefined;
}

export function listFlag(flags: FlagValues, name: string): string[] {
  const v = flags[name];
  return Array.isArray(v) ? v : [];
}
