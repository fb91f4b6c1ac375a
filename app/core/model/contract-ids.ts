/**
 * The contract names alone, without the schemas: a module that only needs to recognise a report (the
 * Electron main process, which bundles no npm package) imports this file rather than report.ts.
 */
export const REPORT_SCHEMA_ID = 'counterweight.report/1';
