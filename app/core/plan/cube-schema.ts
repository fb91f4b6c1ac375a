/**
 * The JSON Schema of one row of an exported plan's cube result (README, "An exported plan"), generated from
 * the cube's measure list (app/core/cube/measures.ts), so it names every column the cube statement writes.
 * A row as an engine exports it to JSON: segment values s0, s1, ... (text), the action a, the policy version
 * v, the time bucket b, then the measures. ClickHouse's cube also writes each exact sum as 64- and 32-bit limbs
 * (`<column>__ph` ..., `__k`, `__plain`, app/core/scan/cube-clickhouse.ts), which counterweight turns back into
 * the column; those are allowed by the pattern below.
 */
import { CELL_MEASURES } from '../cube/measures.ts';
import { CUBE_SCHEMA_ID } from './plan.ts';

export function cubeJsonSchema(): Record<string, unknown> {
  const measures = Object.fromEntries(CELL_MEASURES.map((m) => [m.column, {
    type: ['number', 'null'],
    description: `${m.field}: ${m.merge === 'sum' ? 'a sum over the cell\'s rows (0 when none)' : `the cell's ${m.merge}imum (null when no row counts)`}`,
  }]));
  return {
    $schema: 'http://json-schema.org/draft-07/schema#',
    $id: 'https://counterweight.invalid/schema/cube-1.json',
    title: `Counterweight cube row, contract ${CUBE_SCHEMA_ID}`,
    description: 'One row of the cube statement an exported plan prints (counterweight plan): one cell per (segment values, action, policy version, time bucket). Read back by counterweight audit --cube.',
    type: 'object',
    required: ['cube_schema', 'a', 'v', 'b', ...CELL_MEASURES.map((m) => m.column)],
    properties: {
      cube_schema: { const: CUBE_SCHEMA_ID, description: 'the contract this row follows; a cube of another version is refused' },
      a: { type: 'string', description: 'the action (its text; "(null)" for a missing action)' },
      v: { type: 'string', description: 'the policy version (its text; empty without a policy_version role)' },
      b: { type: 'integer', description: 'the time bucket: floor((time - origin) / width) in the buckets the plan chose; -1 for rows without a time; 0 without a time role' },
      ...measures,
    },
    patternProperties: {
      '^s[0-9]+$': { type: 'string', description: 'the value of the i-th segment column (its text; "(null)", or "(other)" past the cap)' },
      '^d_s[0-9]+$': { type: ['number', 'null'], description: 'distinct values of a capped segment column before capping' },
      '^[a-z0-9_]+__(ph|pm|po|nh|nm|no|k|plain)$': { type: ['number', 'string', 'null'], description: 'ClickHouse: the limbs of an exact sum' },
    },
    additionalProperties: false,
  };
}
