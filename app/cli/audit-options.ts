/** Turning audit flags into an audit request's roles, targets and settings, with specific errors. */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import YAML from 'yaml';
import { SINGLE_ROLES } from '../core/roles/roles.ts';
import { SETTINGS } from '../core/settings.ts';
import { UsageError } from './errors.ts';

export type RoleFlags = Partial<Record<(typeof SINGLE_ROLES)[number], string>> & { segments?: string[] };

export function parseRoleFlags(roleFlags: readonly string[], segmentsFlag: string | undefined): RoleFlags {
  const roles: RoleFlags = {};
  const known = [...SINGLE_ROLES, 'segments'];
  for (const flag of roleFlags) {
    const eq = flag.indexOf('=');
    if (eq <= 0 || eq === flag.length - 1) throw new UsageError(`--role expects NAME=COLUMN, e.g. --role propensity=p_logged; got '${flag}'`);
    const name = flag.slice(0, eq);
    const column = flag.slice(eq + 1);
    if (!known.includes(name)) throw new UsageError(`--role ${flag}: unknown role '${name}' (roles: ${known.join(', ')})`);
    if (name === 'segments') {
      roles.segments = splitList(column, '--role segments');
      continue;
    }
    const role = name as (typeof SINGLE_ROLES)[number];
    if (roles[role] !== undefined) throw new UsageError(`--role ${name} given twice`);
    roles[role] = column;
  }
  if (segmentsFlag !== undefined) {
    if (roles.segments) throw new UsageError('give segment columns either with --segments or with --role segments=..., not both');
    roles.segments = segmentsFlag === 'none' ? [] : splitList(segmentsFlag, '--segments');
  }
  return roles;
}

function splitList(text: string, flag: string): string[] {
  const items = text.split(',').map((s) => s.trim());
  if (items.some((s) => s === '')) throw new UsageError(`${flag} expects comma-separated column names without empty entries, got '${text}'`);
  if (new Set(items).size !== items.length) throw new UsageError(`${flag} names a column twice: '${text}'`);
  return items;
}

export type SettingsValues = Record<string, number | string | boolean>;

export function loadSettingsFile(file: string, cwd: string): SettingsValues {
  const full = path.resolve(cwd, file);
  let text: string;
  try {
    text = readFileSync(full, 'utf8');
  } catch {
    throw new UsageError(`cannot read settings file ${file}`);
  }
  const lower = file.toLowerCase();
  let parsed: unknown;
  try {
    if (lower.endsWith('.json')) parsed = JSON.parse(text);
    else if (lower.endsWith('.yaml') || lower.endsWith('.yml')) parsed = YAML.parse(text);
    else throw new UsageError(`settings file ${file} must end in .json, .yaml or .yml`);
  } catch (error) {
    if (error instanceof UsageError) throw error;
    throw new UsageError(`settings file ${file} is not valid ${lower.endsWith('.json') ? 'JSON' : 'YAML'}: ${(error as Error).message.split('\n')[0]}`);
  }
  if (parsed === null || typeof parsed !== 'object' || Array.isArray(parsed)) throw new UsageError(`settings file ${file} must hold one object of setting: value pairs`);
  const out: SettingsValues = {};
  for (const [key, value] of Object.entries(parsed as Record<string, unknown>)) {
    if (!(key in SETTINGS)) throw new UsageError(`settings file ${file}: unknown setting '${key}'${nearest(key)}`);
    if (typeof value !== 'number' && typeof value !== 'string' && typeof value !== 'boolean') throw new UsageError(`settings file ${file}: '${key}' must be a number, string or boolean`);
    out[key] = value;
  }
  return out;
}

function nearest(key: string): string {
  const prefix = key.split('.').slice(0, 2).join('.');
  const close = Object.keys(SETTINGS).filter((k) => k.startsWith(prefix));
  return close.length ? ` (settings starting with ${prefix}: ${close.join(', ')})` : ' (run counterweight audit --help for where the settings are listed)';
}

export interface TargetFlag {
  spec: string;
  tableText?: string;
}

/** Reads the file of each table:<path> target (the core parses and validates its rows). */
export function readTargets(specs: readonly string[], cwd: string): TargetFlag[] {
  return specs.map((spec) => {
    if (!spec.startsWith('table:')) return { spec };
    const file = spec.slice('table:'.length);
    if (!file) throw new UsageError(`--target table: needs a file, e.g. --target table:policy.csv`);
    const lower = file.toLowerCase();
    if (!lower.endsWith('.csv') && !lower.endsWith('.json')) throw new UsageError(`--target ${spec}: the policy table must be a .csv or .json file`);
    try {
      return { spec, tableText: readFileSync(path.resolve(cwd, file), 'utf8') };
    } catch {
      throw new UsageError(`--target ${spec}: cannot read ${file}`);
    }
  });
}
