import { readFileSync } from 'node:fs';
import { REPORT_SCHEMA_PATH } from '../../report/json.ts';
import type { CommandSpec } from '../args.ts';
import { UsageError } from '../errors.ts';
import type { CliIo } from '../io.ts';

export const schemaSpec: CommandSpec = {
  name: 'schema',
  summary: 'Print the JSON Schema of the report (counterweight.report/1).',
  positionals: { name: '', min: 0, max: 0 },
  flags: {},
};

export function runSchema(io: CliIo): number {
  let text: string;
  try {
    text = readFileSync(REPORT_SCHEMA_PATH, 'utf8');
  } catch {
    throw new UsageError(`the report schema is missing from this build (${REPORT_SCHEMA_PATH})`);
  }
  io.stdout.write(text.endsWith('\n') ? text : `${text}\n`);
  return 0;
}
