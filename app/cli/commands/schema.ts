import { reportJsonSchema, schemaText } from '../../core/model/json-schema.ts';
import type { CommandSpec } from '../args.ts';
import type { CliIo } from '../io.ts';

export const schemaSpec: CommandSpec = {
  name: 'schema',
  summary: 'Print the JSON Schema of the report (counterweight.report/1).',
  positionals: { name: '', min: 0, max: 0 },
  flags: {},
};

/** The schema generated from the contract itself: the same text as app/core/model/report.schema.json. */
export function runSchema(io: CliIo): number {
  io.stdout.write(schemaText(reportJsonSchema()));
  return 0;
}
