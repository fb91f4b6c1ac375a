/**
 * The contract name alone, without the schemas: the engine host's wire messages (app/engine/host/messages.ts)
 * recognise a report by it without loading report.ts, whose enums come from the check registry and so from
 * every check.
 */
export const REPORT_SCHEMA_ID = 'counterweight.report/1';
