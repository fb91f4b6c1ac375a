/** Which of the audit's statements a query is, by its text (for per-statement timings in bench/). */
export function stageOf(sql: string): string {
  if (/^DESCRIBE/.test(sql)) return 'describe';
  // the hooks' labels in the browser harness (renderer/engine-harness.ts)
  if (/^CREATE TEMP TABLE AS /.test(sql)) return 'groups';
  if (/^project /.test(sql)) return 'projection';
  if (/"c0_nn"/.test(sql)) return /LIMIT/.test(sql) ? 'profile1' : 'profile';
  if (/AS n_p_null/.test(sql)) return 'cube';
  if (/rows_in_duplicates/.test(sql)) return 'duplicates';
  if (/__finding/.test(sql)) return 'examples';
  if (/w DESC, r NULLS LAST/.test(sql)) return 'clip';
  if (/w DESC/.test(sql)) return 'tail';
  return 'other';
}
