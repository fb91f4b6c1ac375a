/** The terminal summary of a comparison: what makes the two incomparable first, then what got worse, then the rest. */
import type { Comparison } from '../core/compare/contract.ts';
import type { Paint } from './summary.ts';
import { terminalText } from './terminal-text.ts';

/** Values from a log or a report reach the terminal through the one escaping helper. */
export const plain = (text: string): string => terminalText(text);

const VERDICT_WORDS: Record<string, string> = { supported: 'SUPPORTED', 'supported-with-caveats': 'SUPPORTED WITH CAVEATS', 'not-supported': 'NOT SUPPORTED' };

export function formatComparisonSummary(c: Comparison, paint: Paint, labels: { baseline: string; current: string }): string {
  const out: string[] = [];
  out.push(paint.bold(`Comparison: ${plain(labels.baseline)} (baseline) → ${plain(labels.current)}`));
  if (c.issues.length) {
    out.push(c.comparable ? paint.bold('Note') : paint.status('fail', 'NOT DIRECTLY COMPARABLE'));
    for (const i of c.issues) out.push(`  ! ${plain(i.message)}`);
  }
  const change = c.verdict.change === 'same' ? 'unchanged' : c.verdict.change;
  out.push(`Verdict: ${paint.status(c.verdict.baseline, VERDICT_WORDS[c.verdict.baseline] ?? c.verdict.baseline)} → ${paint.status(c.verdict.current, VERDICT_WORDS[c.verdict.current] ?? c.verdict.current)} (${change})`);
  out.push('');
  out.push(paint.bold(`What got worse (${c.worse.length})`));
  if (c.worse.length === 0) out.push('  nothing');
  for (const h of c.worse) out.push(`  ${h.regression ? paint.status('fail', 'REGRESSION') : paint.status('warn', 'worse     ')} ${plain(h.message)}`);
  out.push('');
  out.push(paint.bold(`What got better (${c.better.length})`));
  if (c.better.length === 0) out.push('  nothing');
  for (const h of c.better) out.push(`  ${paint.status('pass', 'better')} ${plain(h.message)}`);
  out.push('');
  const n = c.counts;
  out.push(`Findings: ${n.new_findings} new, ${n.resolved_findings} resolved, ${n.persisting_findings} persisting${n.unlisted_findings ? `, ${n.unlisted_findings} on one report only because the other's list was capped` : ''} · checks changed: ${n.changed_checks} · segments whose readiness changed: ${n.changed_segments} · estimates that moved beyond their uncertainty: ${n.moved_estimates}`);
  for (const t of c.targets) {
    if (t.presence !== 'both') continue;
    const f = (x: number | null, digits = 3) => (x === null ? 'n/a' : Number(x.toPrecision(digits)).toString());
    out.push(`  ${plain(t.name)}: ESS ${f(t.ess.baseline, 4)} → ${f(t.ess.current, 4)}, k̂ ${f(t.khat.baseline)} → ${f(t.khat.current)}, SNIPS ${f(t.snips?.baseline.value ?? null)} → ${f(t.snips?.current.value ?? null)}${t.snips?.differs ? ' (moved)' : ''}`);
  }
  out.push(c.regression ? paint.status('fail', 'Result: regression') : paint.status('pass', 'Result: no regression'));
  return `${out.join('\n')}\n`;
}
