/** The JSON face of a report: stable serialisation and validation against the report contract. */
import { fileURLToPath } from 'node:url';

/** The committed JSON Schema, generated from app/core/model/report.ts by `npm run schemas`. */
export const REPORT_SCHEMA_PATH = fileURLToPath(new URL('../core/model/report.schema.json', import.meta.url));

export { REPORT_KEY_ORDER, orderReportKeys, serializeReport, toJsonValue } from './serialize.ts';
export { parseReport, ReportContractError, validateReport, type ValidationResult } from './validate.ts';
