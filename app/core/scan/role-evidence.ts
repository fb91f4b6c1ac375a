/**
 * Evidence for the action role from the data: one small aggregate per candidate column, over the log's
 * first rows. For each value a of the candidate and each candidate propensity column p it returns the
 * row count and the sums of 1/p and 1/p² over rows with a valid p, from which app/core/roles/evidence.ts
 * computes the weight-balance identity B(a) = (1/n) Σ 1{A=a}/p (Horvitz & Thompson 1952: E[1{A=a}/p] = 1
 * when p is the logging probability of the logged action A).
 */
import { ident, integer } from '../sql/quote.ts';
import type { Cell, Table } from '../table.ts';
import { column } from '../table.ts';
import { PREFIX_ROWS } from './profile.ts';

/** Values kept per candidate column; a column with more values is not an action candidate. */
export const EVIDENCE_MAX_VALUES = 1000;

const pExpr = (p: string) => `TRY_CAST(${ident(p)} AS DOUBLE)`;
const valid = (p: string) => `(${pExpr(p)} > 0 AND ${pExpr(p)} <= 1 AND NOT isnan(${pExpr(p)}))`;

/**
 * One aggregate per candidate action column against every candidate propensity column, all of them
 * grouping sets of one statement so the first rows are read once. Column `g` says which candidate a row
 * belongs to (its index in `candidates`).
 */
export function actionEvidenceSql(relation: string, candidates: readonly string[], propensities: readonly string[], rows = PREFIX_ROWS): string {
  if (propensities.length === 0 || candidates.length === 0) throw new Error('action evidence needs at least one candidate and one propensity column');
  const sums = propensities.flatMap((p, j) => [
    `count(*) FILTER (WHERE ${valid(p)}) AS n${j}`,
    `sum(1.0 / ${pExpr(p)}) FILTER (WHERE ${valid(p)}) AS s${j}`,
    `sum(1.0 / (${pExpr(p)} * ${pExpr(p)})) FILTER (WHERE ${valid(p)}) AS q${j}`,
  ]);
  const keys = candidates.map((c, i) => `CAST(${ident(c)} AS VARCHAR) AS k${i}`);
  const sets = candidates.map((_, i) => `(k${i})`).join(', ');
  // GROUPING(k0, k1, ...) has bit (n-1-i) clear for candidate i's grouping set
  const which = candidates.length === 1 ? '0' : `${integer(candidates.length - 1)} - CAST(log2(${integer(2 ** candidates.length - 1)} - GROUPING(${candidates.map((_, i) => `k${i}`).join(', ')})) AS INTEGER)`;
  const value = candidates.length === 1 ? 'k0' : `CASE ${candidates.map((_, i) => `WHEN GROUPING(k${i}) = 0 THEN k${i}`).join(' ')} END`;
  return [
    `SELECT ${which} AS g, ${value} AS value, count(*) AS rows, ${sums.join(', ')}`,
    `FROM (SELECT ${keys.join(', ')}, ${propensities.map(ident).join(', ')} FROM ${relation} LIMIT ${integer(rows)})`,
    `GROUP BY GROUPING SETS (${sets})`,
    'ORDER BY g, value NULLS LAST',
  ].join('\n');
}

export interface EvidenceGroup {
  /** the candidate's value as text; null for rows where it is empty */
  readonly value: string | null;
  readonly rows: number;
  /** per propensity column, in the order given to the builder: rows with a valid p, Σ1/p, Σ1/p² */
  readonly valid: readonly number[];
  readonly sumInv: readonly number[];
  readonly sumInv2: readonly number[];
}

const toNumber = (v: Cell | undefined): number => (typeof v === 'number' ? v : typeof v === 'bigint' ? Number(v) : 0);

/** The groups of each candidate, in the order given to the builder; more than EVIDENCE_MAX_VALUES + 1 are cut there. */
export function parseActionEvidence(table: Table, candidates: number, propensities: number): EvidenceGroup[][] {
  const which = column(table, 'g');
  const all = parseGroups(table, propensities);
  const out: EvidenceGroup[][] = Array.from({ length: candidates }, () => []);
  all.forEach((g, i) => {
    const list = out[toNumber(which[i])];
    if (list && list.length <= EVIDENCE_MAX_VALUES) list.push(g);
  });
  return out;
}

function parseGroups(table: Table, propensities: number): EvidenceGroup[] {
  const values = column(table, 'value');
  const rows = column(table, 'rows');
  const per = (prefix: string) => Array.from({ length: propensities }, (_, j) => column(table, `${prefix}${j}`));
  const n = per('n');
  const s = per('s');
  const q = per('q');
  return values.map((v, i) => ({
    value: v === null ? null : String(v),
    rows: toNumber(rows[i]),
    valid: n.map((c) => toNumber(c[i])),
    sumInv: s.map((c) => toNumber(c[i])),
    sumInv2: q.map((c) => toNumber(c[i])),
  }));
}
