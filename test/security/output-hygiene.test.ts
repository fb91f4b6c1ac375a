/**
 * Output hygiene (issue 18 #4 and #6): the terminal summary prints log values with their control
 * characters escaped, and the edited target table downloads with formula-like cells neutralised, which
 * the core's CSV reader undoes. OWASP "CSV Injection" lists the starting characters = + - @ tab CR.
 */
import { describe, expect, it } from 'vitest';
import { parseCsv } from '../../app/core/targets/csv.ts';
import { parseTable } from '../../app/core/targets/targets.ts';
import { painter, formatAuditSummary } from '../../app/cli/summary.ts';
import { terminalText } from '../../app/cli/terminal-text.ts';
import { tableCsv, type TablePolicy } from '../../renderer/state/policy-edit.ts';
import { fixtureReport } from '../unit/report/fixture-report.ts';

// eslint-disable-next-line no-control-regex -- matching control characters is the point here
const CONTROL = /[\u0000-\u0009\u000b-\u001f\u007f-\u009f]/;

describe('terminal output', () => {
  it.each([
    ['ESC[2K ESC[1A (erase the line, move up)', 'bakery\u001b[2K\u001b[1A', 'bakery\\x1b[2K\\x1b[1A'],
    ['a C1 CSI', 'x\u009b31m', 'x\\x9b31m'],
    ['a carriage return over the line', 'FAIL\rPASS', 'FAIL\\rPASS'],
    ['a newline inside a value', 'a\nb', 'a\\nb'],
    ['NUL and DEL', 'a\u0000b\u007f', 'a\\x00b\\x7f'],
    ['a right-to-left override', 'abc\u202edcb', 'abc\\u202edcb'],
    ['plain text and non-Latin letters', 'north-harbor · Ørsted 東京', 'north-harbor · Ørsted 東京'],
  ])('terminalText escapes %s', (_what, value, shown) => {
    expect(terminalText(value)).toBe(shown);
  });

  it('issue 18 #4: an action value that erases the FAIL line and prints a fake PASS line is shown escaped in the summary', () => {
    const report = fixtureReport();
    const hostile = `bakery\u001b[2K\u001b[1A\r  PASS  propensity.range`;
    const checks = report.checks.map((c, i) => (i === 0 ? { ...c, summary: `action ${hostile} is never explored` } : c));
    const text = formatAuditSummary({ ...report, checks, reasons: [{ ...(report.reasons[0] ?? { check: 'propensity.range', status: 'fail' }), message: hostile } as never] }, [{ name: `promotion\u001b[31m`, type: 'VARCHAR' }], painter(false));
    expect(text).not.toMatch(CONTROL);
    expect(text).toContain('bakery\\x1b[2K\\x1b[1A\\r  PASS');
  });

  it('colours the summary with its own codes only', () => {
    const text = formatAuditSummary(fixtureReport(), [], painter(true));
    // eslint-disable-next-line no-control-regex -- matching control characters is the point here
    const codes = [...text.matchAll(/\u001b\[(\d+)m/g)].map((m) => m[1]);
    expect(new Set(codes)).toEqual(new Set(codes.filter((c) => ['0', '1', '2', '31', '32', '33'].includes(c as string))));
  });
});

describe('CSV export of the edited target table', () => {
  const policy: TablePolicy = {
    kind: 'table', name: 'table:t', spec: 'table:t.csv', implicit: false, keyColumns: ['=region'], actions: ['=HYPERLINK("http://x")', '+1', '-2', '@SUM(A1)', '\tpad', 'plain'],
    probabilities: new Map([['@north', new Map([['=HYPERLINK("http://x")', 0.5], ['+1', 0.1], ['-2', 0.1], ['@SUM(A1)', 0.1], ['\tpad', 0.1], ['plain', 0.1]])]]),
  };

  it('issue 18 #6: cells and headers starting with = + - @ or a tab are written with a leading apostrophe', () => {
    const text = tableCsv(policy, new Map(), '+action');
    const { header, rows } = { header: text.split('\n')[0], rows: text.trim().split('\n').slice(1) };
    expect(header).toBe("'=region,'+action,probability");
    expect(rows).toEqual([
      `'@north,"'=HYPERLINK(""http://x"")",0.5`,
      "'@north,'+1,0.1",
      "'@north,'-2,0.1",
      "'@north,'@SUM(A1),0.1",
      "'@north,'\tpad,0.1",
      "'@north,plain,0.1",
    ]);
    for (const line of text.split('\n')) for (const cell of line.split(',')) expect(cell.replace(/^"/, '')).not.toMatch(/^[=+\-@\t\r]/);
  });

  it('issue 18 #6: the core\'s reader undoes it, so the downloaded table is the table that was edited', () => {
    const text = tableCsv(policy, new Map(), '+action');
    expect(parseCsv(text).header).toEqual(['=region', '+action', 'probability']);
    const again = parseTable('table:t.csv', 't.csv', text, '+action', ['=region', '+action']) as TablePolicy;
    expect([...again.probabilities.keys()]).toEqual(['@north']);
    expect([...(again.probabilities.get('@north')?.keys() ?? [])]).toEqual(policy.actions);
  });
});
