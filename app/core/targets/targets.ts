/**
 * Target policies (README.md, "What the audit checks"): uniform, always:<action>, table:<file> (CSV or JSON rows of
 * segment values, action, probability) and column:<name>. A table is validated on parsing:
 * probabilities in [0, 1], each segment summing to 1 within 1e-9, no repeated rows.
 */
import { parseCsv } from './csv.ts';

export interface TargetInput {
  readonly spec: string;
  /** Text of the table file for table:<file> specs; the caller reads the file. */
  readonly tableText?: string;
}

export type TargetPolicy =
  | { readonly kind: 'uniform'; readonly name: string; readonly spec: string; readonly implicit: boolean }
  | { readonly kind: 'always'; readonly name: string; readonly spec: string; readonly action: string; readonly implicit: boolean }
  | { readonly kind: 'column'; readonly name: string; readonly spec: string; readonly column: string; readonly implicit: boolean }
  | {
      readonly kind: 'table';
      readonly name: string;
      readonly spec: string;
      readonly implicit: boolean;
      /** segment columns the table is keyed on, in table order */
      readonly keyColumns: readonly string[];
      /** segment key (key column values joined by U+001F) -> action -> probability */
      readonly probabilities: ReadonlyMap<string, ReadonlyMap<string, number>>;
      readonly actions: readonly string[];
    };

export class TargetError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'TargetError';
  }
}

const SUM_TOLERANCE = 1e-9;
const PROBABILITY_NAMES = ['probability', 'prob', 'propensity', 'p', 'q', 'pi'];

function tableName(path: string): string {
  const base = path.split(/[\\/]/).pop() ?? path;
  return base.replace(/\.(csv|json|tsv)$/i, '');
}

function rowsFromText(spec: string, path: string, text: string): Record<string, unknown>[] {
  if (/\.json$/i.test(path) || /^\s*[[{]/.test(text)) {
    let data: unknown;
    try {
      data = JSON.parse(text);
    } catch (e) {
      throw new TargetError(`${spec}: not valid JSON (${(e as Error).message})`);
    }
    const rows = Array.isArray(data) ? data : (data as { rows?: unknown }).rows;
    if (!Array.isArray(rows) || rows.some((r) => typeof r !== 'object' || r === null || Array.isArray(r))) {
      throw new TargetError(`${spec}: JSON must be an array of row objects (or {"rows": [...]})`);
    }
    return rows as Record<string, unknown>[];
  }
  const { header, rows } = parseCsv(text);
  return rows.map((r) => Object.fromEntries(header.map((h, j) => [h, r[j] ?? ''])));
}

export function parseTable(spec: string, path: string, text: string, actionColumn: string, logColumns: readonly string[]): TargetPolicy {
  const rows = rowsFromText(spec, path, text);
  if (rows.length === 0) throw new TargetError(`${spec}: the table has no rows`);
  const columns = Object.keys(rows[0] as object);
  const probCol = PROBABILITY_NAMES.find((n) => columns.includes(n));
  if (!probCol) throw new TargetError(`${spec}: no probability column (expected one of ${PROBABILITY_NAMES.join(', ')}); columns are ${columns.join(', ')}`);
  const actCol = columns.includes(actionColumn) ? actionColumn : columns.includes('action') ? 'action' : null;
  if (!actCol) throw new TargetError(`${spec}: no action column (expected "${actionColumn}" or "action"); columns are ${columns.join(', ')}`);
  const keyColumns = columns.filter((c) => c !== probCol && c !== actCol);
  const unknown = keyColumns.filter((c) => !logColumns.includes(c));
  if (unknown.length) throw new TargetError(`${spec}: column(s) ${unknown.map((c) => `"${c}"`).join(', ')} are not columns of the log; segment key columns must name log columns`);
  const probabilities = new Map<string, Map<string, number>>();
  const actions = new Set<string>();
  rows.forEach((row, i) => {
    const line = i + 2;
    const raw = row[probCol];
    const q = typeof raw === 'number' ? raw : Number(String(raw ?? '').trim());
    if (String(raw ?? '').trim() === '' || !Number.isFinite(q)) throw new TargetError(`${spec}: row ${line}: probability ${JSON.stringify(raw)} is not a number`);
    if (q < 0 || q > 1) throw new TargetError(`${spec}: row ${line}: probability ${q} is outside [0, 1]`);
    const action = String(row[actCol] ?? '');
    const key = keyColumns.map((c) => (row[c] === null || row[c] === undefined ? '(null)' : String(row[c]))).join('\u001f');
    let m = probabilities.get(key);
    if (!m) probabilities.set(key, (m = new Map()));
    if (m.has(action)) throw new TargetError(`${spec}: row ${line}: repeats (${describeKey(keyColumns, key)}, ${action})`);
    m.set(action, q);
    actions.add(action);
  });
  for (const [key, m] of probabilities) {
    let s = 0;
    for (const q of m.values()) s += q;
    if (Math.abs(s - 1) > SUM_TOLERANCE) throw new TargetError(`${spec}: probabilities for segment (${describeKey(keyColumns, key)}) sum to ${s}, not 1 (tolerance ${SUM_TOLERANCE})`);
  }
  return { kind: 'table', name: `table:${tableName(path)}`, spec, implicit: false, keyColumns, probabilities, actions: [...actions] };
}

function describeKey(columns: readonly string[], key: string): string {
  if (columns.length === 0) return 'all rows';
  const values = key.split('\u001f');
  return columns.map((c, i) => `${c}=${values[i]}`).join(', ');
}

export interface TargetContext {
  readonly actionColumn: string;
  readonly logColumns: readonly string[];
  readonly targetColumn: string | null;
}

export function parseTarget(input: TargetInput, ctx: TargetContext): TargetPolicy {
  const spec = input.spec.trim();
  if (spec === 'uniform') return { kind: 'uniform', name: 'uniform', spec, implicit: false };
  const m = /^(always|table|column):(.+)$/.exec(spec);
  if (!m) throw new TargetError(`target "${spec}" is not one of uniform, always:<action>, table:<file>, column:<name>`);
  const [, kind, arg] = m as unknown as [string, string, string];
  if (kind === 'always') return { kind: 'always', name: spec, spec, action: arg, implicit: false };
  if (kind === 'column') {
    if (!ctx.logColumns.includes(arg)) throw new TargetError(`target ${spec}: the log has no column "${arg}"`);
    return { kind: 'column', name: spec, spec, column: arg, implicit: false };
  }
  if (input.tableText === undefined) throw new TargetError(`target ${spec}: the table file's text was not provided`);
  return parseTable(spec, arg, input.tableText, ctx.actionColumn, ctx.logColumns);
}

/** The targets of an audit; with none given, uniform plus always:<a> for every observed action. */
export function resolveTargets(inputs: readonly TargetInput[], ctx: TargetContext, observedActions: readonly string[]): TargetPolicy[] {
  if (inputs.length > 0) {
    const out = inputs.map((i) => parseTarget(i, ctx));
    const names = new Set<string>();
    for (const t of out) {
      if (names.has(t.name)) throw new TargetError(`target ${t.name} is given twice`);
      names.add(t.name);
    }
    return out;
  }
  return [
    { kind: 'uniform', name: 'uniform', spec: 'uniform', implicit: true },
    ...observedActions.map((a): TargetPolicy => ({ kind: 'always', name: `always:${a}`, spec: `always:${a}`, action: a, implicit: true })),
  ];
}

/** A list of action values in words, the first `max` of them. */
function actionList(actions: readonly string[], max = 40): string {
  const shown = actions.slice(0, max).map((a) => JSON.stringify(a)).join(', ');
  return actions.length > max ? `${shown} and ${actions.length - max} more` : shown;
}

/** An always:<action> target must name an action the log contains; the error lists the log's actions. */
export function checkTargetActions(targets: readonly TargetPolicy[], actions: readonly string[]): void {
  const known = new Set(actions);
  const unknown = targets.filter((t): t is Extract<TargetPolicy, { kind: 'always' }> => t.kind === 'always' && !t.implicit && !known.has(t.action));
  if (unknown.length === 0) return;
  const names = unknown.map((t) => JSON.stringify(t.action)).join(', ');
  throw new TargetError(`target ${unknown.map((t) => t.spec).join(', ')}: the log has no action ${names}; its ${actions.length} action${actions.length === 1 ? ' is' : 's are'} ${actionList(actions)}`);
}
