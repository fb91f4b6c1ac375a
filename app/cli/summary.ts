/** The terminal summary of an audit: header (rows, columns), verdict first, then each check. */
import { remedyLines } from '../report/remedies-text.ts';
import type { Report, Status, Verdict } from '../core/model/report.ts';
import { STATUS_LABELS } from '../charts/palette.ts';
import { SHOWN_STATUS, shownStatus } from '../charts/labels.ts';
import { fmtInterval, fmtNumber, fmtShare, withTimesInWords } from '../report/format.ts';
import type { ColumnInfo } from './sources.ts';
import { terminalText as t_ } from './terminal-text.ts';
import { counted } from '../core/count-words.ts';

const ANSI = { reset: '\x1b[0m', bold: '\x1b[1m', dim: '\x1b[2m', red: '\x1b[31m', yellow: '\x1b[33m', green: '\x1b[32m' };

export interface Paint {
  bold(s: string): string;
  dim(s: string): string;
  status(status: Status | Verdict, s: string): string;
}

export function painter(colour: boolean): Paint {
  if (!colour) return { bold: (s) => s, dim: (s) => s, status: (_st, s) => s };
  const tone = (st: Status | Verdict): string =>
    st === 'fail' || st === 'not-supported' ? ANSI.red : st === 'warn' || st === 'supported-with-caveats' ? ANSI.yellow : st === 'pass' || st === 'supported' ? ANSI.green : ANSI.dim;
  return {
    bold: (s) => `${ANSI.bold}${s}${ANSI.reset}`,
    dim: (s) => `${ANSI.dim}${s}${ANSI.reset}`,
    status: (st, s) => `${tone(st)}${ANSI.bold}${s}${ANSI.reset}`,
  };
}

const VERDICT_WORDS: Record<Verdict, string> = {
  supported: 'SUPPORTED',
  'supported-with-caveats': 'SUPPORTED WITH CAVEATS',
  'not-supported': 'NOT SUPPORTED',
};

export function formatSourceHeader(files: readonly string[], format: string, rows: number, columns: readonly ColumnInfo[], paint: Paint): string {
  const lines = [
    paint.bold(t_(files.length === 1 ? files[0] : `${files.length} files (${files[0]} …)`)),
    `${t_(format)} · ${counted(rows, 'row')} · ${counted(columns.length, 'column')}`,
  ];
  const width = Math.max(0, ...columns.map((c) => t_(c.name).length));
  for (const c of columns) lines.push(`  ${t_(c.name).padEnd(width)}  ${paint.dim(t_(c.type))}`);
  return `${lines.join('\n')}\n`;
}

export function formatAuditSummary(report: Report, columns: readonly ColumnInfo[], paint: Paint): string {
  const out: string[] = [];
  out.push(formatSourceHeader(report.input.files.map((f) => f.path), report.input.format, report.input.rows, columns, paint));
  out.push(`Verdict: ${paint.status(report.verdict, VERDICT_WORDS[report.verdict])}`);
  for (const r of report.reasons) out.push(`  ${paint.status(r.status, STATUS_LABELS[r.status].text.padEnd(4))} ${t_(r.check)}: ${t_(withTimesInWords(r.message))}`);
  out.push('');
  out.push(paint.bold('Checks'));
  const idWidth = Math.max(...report.checks.map((c) => c.id.length), 0);
  for (const c of report.checks) {
    const label = SHOWN_STATUS[shownStatus(c)];
    out.push(`  ${paint.status(c.status, `${label.icon} ${label.text.padEnd(7)}`)} ${t_(c.id).padEnd(idWidth)}  ${t_(withTimesInWords(c.summary))}`);
  }
  if (report.targets.length > 0) {
    out.push('');
    out.push(paint.bold('Targets'));
    const nameWidth = Math.max(...report.targets.map((t) => t_(t.name).length));
    for (const t of report.targets) {
      out.push(`  ${t_(t.name).padEnd(nameWidth)}  ESS ${fmtNumber(Math.round(t.ess))} (${fmtShare(t.ess_fraction)})  k̂ ${fmtNumber(t.khat)}  IPS ${fmtNumber(t.ips.value)} ${fmtInterval(t.ips.ci_low, t.ips.ci_high)}  SNIPS ${fmtNumber(t.snips.value)} ${fmtInterval(t.snips.ci_low, t.snips.ci_high)}`);
    }
  }
  out.push('');
  for (const c of report.cautions) out.push(paint.dim(`Note: ${t_(c)}`));
  if (report.remedies && report.remedies.restricted.length > 0) {
    out.push('');
    out.push(paint.bold('What would make this usable'));
    for (const r of remedyLines(report.remedies)) {
      for (const line of [r.restricted, r.caps, r.plan]) if (line) out.push(`  ${t_(r.target)}: ${t_(line)}`);
    }
  }
  return `${out.join('\n')}\n`;
}
