/**
 * Edits of a table target policy, one segment at a time, written back as the CSV a user could pass to the
 * headless command: the preview re-parses that text with the core's own parser, so the numbers shown for an
 * edit are the numbers an audit with the edited file would give.
 */
import { csvField } from '../../app/core/targets/csv-cell.ts';
import type { TargetPolicy } from '../../app/core/targets/targets.ts';

export type TablePolicy = Extract<TargetPolicy, { kind: 'table' }>;

const KEY_SEPARATOR = '\u001f';
/** The core's tolerance for a segment's probabilities summing to 1 (app/core/targets/targets.ts). */
const SUM_TOLERANCE = 1e-9;

/** action -> probability, for one segment key; what the user typed, possibly not yet a distribution. */
export type SegmentEdit = ReadonlyMap<string, number>;
export type TableEdits = ReadonlyMap<string, SegmentEdit>;

export function segmentKeys(policy: TablePolicy): string[] {
  return [...policy.probabilities.keys()];
}

export function keyLabel(key: string): string {
  return key.split(KEY_SEPARATOR).join(' · ');
}

/** The segment's probabilities over every action the table names (absent rows are 0). */
export function segmentRow(policy: TablePolicy, edits: TableEdits, key: string): Map<string, number> {
  const source = edits.get(key) ?? policy.probabilities.get(key) ?? new Map<string, number>();
  return new Map(policy.actions.map((a) => [a, source.get(a) ?? 0]));
}

/** All of the segment's probability on one action. */
export function allOn(policy: TablePolicy, action: string): SegmentEdit {
  return new Map(policy.actions.map((a) => [a, a === action ? 1 : 0]));
}

/** A sentence for each edited segment that is not a probability distribution; empty when all are. */
export function editProblems(edits: TableEdits, columns: readonly string[]): string[] {
  const problems: string[] = [];
  for (const [key, row] of edits) {
    const values = [...row.values()];
    const where = keyLabel(key) || columns.join(', ');
    if (values.some((q) => !Number.isFinite(q) || q < 0 || q > 1)) problems.push(`Segment ${where}: every probability must be a number from 0 to 1.`);
    else {
      const sum = values.reduce((s, q) => s + q, 0);
      if (Math.abs(sum - 1) > SUM_TOLERANCE) problems.push(`Segment ${where}: the probabilities sum to ${Number(sum.toPrecision(12))}; they must sum to 1.`);
    }
  }
  return problems;
}

/**
 * The table with the edits applied, as CSV: key columns, the action column, `probability`. Numbers are
 * written with JavaScript's shortest round-trip form, so parsing the text gives back the same doubles.
 */
export function tableCsv(policy: TablePolicy, edits: TableEdits, actionColumn: string): string {
  const lines = [[...policy.keyColumns, actionColumn, 'probability'].map(csvField).join(',')];
  for (const key of policy.probabilities.keys()) {
    const values = policy.keyColumns.length === 0 ? [] : key.split(KEY_SEPARATOR);
    const edit = edits.get(key);
    const row = edit ?? (policy.probabilities.get(key) as ReadonlyMap<string, number>);
    for (const [action, q] of row) {
      if (edit && q === 0 && !policy.probabilities.get(key)?.has(action)) continue;
      lines.push([...values, action, String(q)].map(csvField).join(','));
    }
  }
  return `${lines.join('\n')}\n`;
}
