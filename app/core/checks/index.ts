/** The checks in report order; declared once each in ./registry.ts. */
export { BLOCKING, CHECKS, CHECK_IDS, checkDefinition, checksOnPanel, titleOf, type CheckId } from './registry.ts';
export { defineCheck, type CheckDefinition, type CheckPanel } from './define.ts';
