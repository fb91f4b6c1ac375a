/**
 * JSON Schemas generated from the zod contracts in this folder (z.toJSONSchema, draft-07). The committed
 * files are this function's output (`npm run schemas`); test/unit/report/contract.test.ts holds them equal.
 */
import { z } from 'zod';
import { COMPARISON_SCHEMA_ID, ComparisonSchema } from '../compare/contract.ts';
import { HISTORY_SCHEMA_ID, HistorySchema } from '../compare/history.ts';
import { REPORT_SCHEMA_ID, ReportSchema } from './report.ts';
import { cubeJsonSchema } from '../plan/cube-schema.ts';

export interface JsonSchemaHeader {
  readonly id: string;
  readonly title: string;
}

export function contractJsonSchema(schema: z.ZodType, header: JsonSchemaHeader): Record<string, unknown> {
  const body = z.toJSONSchema(schema, {
    target: 'draft-7',
    // Example rows carry engine cells of any JSON type.
    unrepresentable: 'any',
    // `.readonly()` says something about the TypeScript type only; a reader may do what it likes with its copy.
    override: (ctx) => { delete (ctx.jsonSchema as Record<string, unknown>).readOnly; },
  }) as Record<string, unknown>;
  const { $schema, ...rest } = body;
  return { $schema, $id: header.id, title: header.title, ...rest };
}

export function reportJsonSchema(): Record<string, unknown> {
  return contractJsonSchema(ReportSchema, {
    id: 'https://counterweight.invalid/schema/report-1.json',
    title: `Counterweight audit report, contract ${REPORT_SCHEMA_ID}`,
  });
}

export function comparisonJsonSchema(): Record<string, unknown> {
  return contractJsonSchema(ComparisonSchema, {
    id: 'https://counterweight.invalid/schema/comparison-1.json',
    title: `Counterweight comparison of two audit reports, contract ${COMPARISON_SCHEMA_ID}`,
  });
}

export function historyJsonSchema(): Record<string, unknown> {
  return contractJsonSchema(HistorySchema, {
    id: 'https://counterweight.invalid/schema/history-1.json',
    title: `Counterweight history of a folder of audit reports, contract ${HISTORY_SCHEMA_ID}`,
  });
}

/** The text of a committed schema file. */
export function schemaText(schema: Record<string, unknown>): string {
  return `${JSON.stringify(schema, null, 2)}\n`;
}

/** Every committed schema file in app/core/model/ and the function that generates it. */
export const GENERATED_SCHEMAS: readonly { readonly file: string; readonly schema: () => Record<string, unknown> }[] = [
  { file: 'report.schema.json', schema: reportJsonSchema },
  { file: 'comparison.schema.json', schema: comparisonJsonSchema },
  { file: 'history.schema.json', schema: historyJsonSchema },
  { file: 'cube.schema.json', schema: cubeJsonSchema },
];
