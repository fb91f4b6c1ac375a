import { comparisonJsonSchema, historyJsonSchema, reportJsonSchema, schemaText } from '../../core/model/json-schema.ts';
import type { CommandSpec, ParsedArgs } from '../args.ts';
import { stringFlag } from '../args.ts';
import type { CliIo } from '../io.ts';

const CONTRACTS = { report: reportJsonSchema, comparison: comparisonJsonSchema, history: historyJsonSchema } as const;

export const schemaSpec: CommandSpec = {
  name: 'schema',
  summary: 'Print the JSON Schema of the report (counterweight.report/1), or of the comparison or history.',
  positionals: { name: '', min: 0, max: 0 },
  flags: {
    contract: { kind: 'string', value: 'report|comparison|history', choices: Object.keys(CONTRACTS), help: 'which document (default: report)' },
  },
};

/** The schema generated from the contract itself: the same text as the committed file in app/core/model/. */
export function runSchema(io: CliIo, args?: ParsedArgs): number {
  const which = (args ? stringFlag(args.flags, 'contract') : undefined) ?? 'report';
  io.stdout.write(schemaText(CONTRACTS[which as keyof typeof CONTRACTS]()));
  return 0;
}
