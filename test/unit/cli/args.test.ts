import { describe, expect, it } from 'vitest';
import { helpText, parseArgs } from '../../../app/cli/args.ts';
import { parseRoleFlags, loadSettingsFile, readTargets } from '../../../app/cli/audit-options.ts';
import { auditSpec, exitCodeFor, runAuditCommand } from '../../../app/cli/commands/audit.ts';
import type { CliIo } from '../../../app/cli/io.ts';
import { signSpec } from '../../../app/cli/commands/sign.ts';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';

describe('parseArgs', () => {
  it('reads values, = values, booleans, repeatable flags and positionals in any order', () => {
    const a = parseArgs(auditSpec, ['log.parquet', '--role', 'propensity=p', '--role=action=promo', '--json', '-', 'more.parquet', '--quiet', '--fail-on=warn']);
    expect(a.positionals).toEqual(['log.parquet', 'more.parquet']);
    expect(a.flags).toEqual({ role: ['propensity=p', 'action=promo'], json: '-', quiet: true, 'fail-on': 'warn' });
  });

  it('treats everything after -- as a source, even names starting with dashes', () => {
    expect(parseArgs(auditSpec, ['--', '--odd-name.csv']).positionals).toEqual(['--odd-name.csv']);
  });

  it.each([
    [['x.csv', '--jsno', 'a'], "unknown option --jsno for 'audit'; did you mean --json?"],
    [['x.csv', '--colour'], "unknown option --colour for 'audit' (see counterweight audit --help)"],
    [['x.csv', '-q'], "unknown option -q for 'audit'"],
    [['x.csv', '--json'], '--json needs a value (FILE|-)'],
    [['x.csv', '--json', '--quiet'], '--json needs a value (FILE|-)'],
    [['x.csv', '--html='], '--html needs a non-empty value (FILE)'],
    [['x.csv', '--engine', 'spark'], "--engine must be native or wasm, got 'spark'"],
    [['x.csv', '--fail-on', 'error'], "--fail-on must be warn or fail, got 'error'"],
    [['x.csv', '--quiet=yes'], '--quiet takes no value'],
    [['x.csv', '--json', 'a', '--json', 'b'], '--json given twice'],
  ])('rejects %j with a specific message', (argv, message) => {
    expect(() => parseArgs(auditSpec, argv)).toThrow(message);
  });

  it.each([
    [[], "'audit' needs a source (usage: counterweight audit <source...> [options]), or --parts DIR"],
    [['--add-part', 'day.parquet'], '--add-part needs --parts DIR, the folder that keeps the parts read so far'],
    [['x.parquet', '--parts', 'state'], 'with --parts, give new parts with --add-part FILE, not as sources (got x.parquet)'],
  ])('audit %j: a source or a parts folder, with a specific message', async (argv, message) => {
    await expect(runAuditCommand(parseArgs(auditSpec, argv), { cwd: process.cwd(), env: {} } as unknown as CliIo)).rejects.toThrow(message);
  });

  it('limits positionals per command', () => {
    expect(() => parseArgs(signSpec, ['a.json', 'b.json'])).toThrow("'sign' takes at most 1 report.json, got 2: a.json b.json");
  });

  it('lets --help through without positionals and lists every flag', () => {
    expect(parseArgs(auditSpec, ['--help']).flags.help).toBe(true);
    const help = helpText(auditSpec);
    for (const flag of Object.keys(auditSpec.flags)) expect(help).toContain(`--${flag}`);
  });
});

describe('audit options', () => {
  it('maps roles and segments', () => {
    expect(parseRoleFlags(['propensity=p_log', 'segments=region,device'], undefined)).toEqual({ propensity: 'p_log', segments: ['region', 'device'] });
    expect(parseRoleFlags([], 'region, tenure')).toEqual({ segments: ['region', 'tenure'] });
    expect(parseRoleFlags([], 'none')).toEqual({ segments: [] });
  });

  it.each([
    [['propensity'], undefined, '--role expects NAME=COLUMN'],
    [['=p'], undefined, '--role expects NAME=COLUMN'],
    [['probability=p'], undefined, "unknown role 'probability'"],
    [['reward=a', 'reward=b'], undefined, '--role reward given twice'],
    [['segments=a'], 'b', 'either with --segments or with --role segments'],
    [[], 'a,,b', 'without empty entries'],
    [[], 'a,a', 'names a column twice'],
  ])('rejects roles %j / segments %j', (roles, segments, message) => {
    expect(() => parseRoleFlags(roles, segments)).toThrow(message);
  });

  it('reads JSON and YAML settings and names unknown keys and bad files', () => {
    const dir = mkdtempSync(path.join(tmpdir(), 'cw-settings-'));
    writeFileSync(path.join(dir, 's.yaml'), 'weights.ess.fail_min: 50\nsupport.floor.epsilon: 0.02\n');
    writeFileSync(path.join(dir, 's.json'), '{"balance.q": 0.05}');
    writeFileSync(path.join(dir, 'bad.json'), '{"balance.q": ');
    writeFileSync(path.join(dir, 'unknown.json'), '{"weights.ess.minimum": 1}');
    writeFileSync(path.join(dir, 'list.yaml'), '- 1\n- 2\n');
    expect(loadSettingsFile('s.yaml', dir)).toEqual({ 'weights.ess.fail_min': 50, 'support.floor.epsilon': 0.02 });
    expect(loadSettingsFile('s.json', dir)).toEqual({ 'balance.q': 0.05 });
    expect(() => loadSettingsFile('bad.json', dir)).toThrow('settings file bad.json is not valid JSON');
    expect(() => loadSettingsFile('unknown.json', dir)).toThrow(/unknown setting 'weights.ess.minimum' \(settings starting with weights.ess: weights.ess.warn_fraction, weights.ess.fail_min\)/);
    expect(() => loadSettingsFile('list.yaml', dir)).toThrow('must hold one object');
    expect(() => loadSettingsFile('s.toml', dir)).toThrow('cannot read settings file s.toml');
  });

  it('reads policy tables for table: targets only', () => {
    const dir = mkdtempSync(path.join(tmpdir(), 'cw-targets-'));
    writeFileSync(path.join(dir, 'v9.csv'), 'region,promotion,probability\n');
    expect(readTargets(['uniform', 'table:v9.csv'], dir)).toEqual([{ spec: 'uniform' }, { spec: 'table:v9.csv', tableText: 'region,promotion,probability\n' }]);
    expect(() => readTargets(['table:missing.csv'], dir)).toThrow('--target table:missing.csv: cannot read missing.csv');
    expect(() => readTargets(['table:v9.xlsx'], dir)).toThrow('must be a .csv or .json file');
  });
});

describe('exit codes', () => {
  it.each([
    ['supported', 'fail', 0], ['supported', 'warn', 0],
    ['supported-with-caveats', 'fail', 0], ['supported-with-caveats', 'warn', 1],
    ['not-supported', 'fail', 2], ['not-supported', 'warn', 2],
  ] as const)('%s with --fail-on %s exits %i', (verdict, failOn, code) => {
    expect(exitCodeFor(verdict, failOn)).toBe(code);
  });
});
