/**
 * TEST FIXTURE, not a product output: a hand-built Report value in the model's shape, used to test the
 * writers (JSON, HTML, signing) independently of the audit core. Its numbers are arbitrary but consistent;
 * `hostile` puts markup and SQL into every field that comes from a log.
 */
import type { CheckId, Report } from '../../../app/core/model/report.ts';
import { CAUTIONS, CHECK_IDS, REPORT_SCHEMA_ID } from '../../../app/core/model/report.ts';

/** Every other registered check, skipped, in registry order. */
const OTHER_CHECKS: CheckId[] = CHECK_IDS.filter((id) => id !== 'propensity.exploration' && id !== 'weights.ess');

export const SCRIPT = '<script>alert(1)</script>';
export const SQL_BREAK = '"; DROP TABLE x; --';
export const QUOTE_BREAK = `' onmouseover='alert(2)`;

export function fixtureReport(options: { hostile?: boolean } = {}): Report {
  const region = options.hostile ? SCRIPT : 'old-town';
  const device = options.hostile ? SQL_BREAK : 'web';
  const action = options.hostile ? QUOTE_BREAK : 'bakery';
  return {
    schema: REPORT_SCHEMA_ID,
    tool: { name: 'counterweight', version: '0.1.0' },
    input: { files: [{ path: 'sample-data/fixture.csv', bytes: 1234, sha256: 'a'.repeat(64), modified: '2024-05-01T00:00:00.000Z' }], format: 'csv', rows: 1000 },
    roles: {
      decision_id: 'decision_id', time: 'logged_at', action: 'promotion', propensity: 'propensity', reward: 'ordered',
      segments: ['region', 'device'], policy_version: 'policy_version', target_propensity: null, propensity_vector: null, action_set_size: null,
      reasons: { action: 'override', propensity: options.hostile ? SCRIPT : 'name contains "propensity"' },
      caps: {},
    },
    settings: {
      'weights.ess.warn_fraction': { value: 0.1, default: 0.1, source: 'common practice', description: 'warn when ESS/n is below this' },
      'support.floor.epsilon': { value: 0.02, default: 0.01, source: 'common practice', description: 'propensity floor ε' },
    },
    verdict: 'not-supported',
    reasons: [
      { check: 'propensity.exploration', status: 'fail', message: `segment region=${region}, device=${device} was never explored` },
      { check: 'weights.ess', status: 'warn', message: 'ESS/n is 4.2% for uniform' },
    ],
    checks: [
      {
        id: 'propensity.exploration', title: 'Exploration', status: 'fail', summary: `1 segment without exploration: ${region}`,
        metrics: { segments_unexplored: 1, share_rows: 0.042, note: options.hostile ? SCRIPT : 'ok' },
        findings: [{
          segment: { region, device }, action, status: 'fail', metrics: { rows: 42, top_action_share: 1 },
          message: `all propensities are 1 in ${region}`,
          examples: [{ decision_id: options.hostile ? SCRIPT : 'd-1', propensity: 1, basket_value: 12.5, n: 7n }],
          sql: `SELECT * FROM src WHERE "region" = '${region.replace(/'/g, "''")}'`,
        }],
        series: [
          { name: 'Top action share by segment', kind: 'bars', x: [`${region}/${device}`, 'north-harbor/ios'], values: [[1, 0.4]], unit: 'share' },
          { name: 'Minimum propensity', kind: 'heatmap', x: [action, 'produce-box'], y: [`${region}/${device}`, 'north-harbor/ios'], values: [[1, null], [0.1, 0.12]] },
        ],
        settings_used: ['support.floor.epsilon'],
      },
      {
        id: 'weights.ess', title: 'Effective sample size', status: 'warn', summary: 'ESS/n 4.2% for uniform', metrics: { ess: 42 }, findings: [],
        series: [
          { name: 'log10 weight', kind: 'histogram', x: [-1, 0, 1, 2], values: [[10, 700, 280, 10]] },
          { name: 'Daily ordered rate', kind: 'lines', x: ['d1', 'd2', 'd3'], values: [[0.1, 0.12, 0.11], [0.08, 0.1, 0.09], [0.12, 0.14, 0.13]], labels: ['rate', 'rate:ci_low', 'rate:ci_high'] },
        ],
        settings_used: ['weights.ess.warn_fraction'],
      },
      ...OTHER_CHECKS.map((id) => ({ id, title: id, status: 'skipped' as const, summary: 'not run in this fixture', metrics: {}, findings: [], settings_used: [] })),
    ],
    targets: [{
      name: 'uniform', spec: 'uniform', ess: 42, ess_fraction: 0.042, max_weight: 7, top1_weight_share: 0.05, khat: 0.31, khat_threshold: 0.7,
      tail_length: 30, support_deficit: 0, ips: { value: 0.11, se: 0.01, ci_low: 0.09, ci_high: 0.13 },
      snips: { value: 0.105, se: 0.009, ci_low: 0.087, ci_high: 0.123 }, dr: { value: null, se: null, ci_low: null, ci_high: null }, detectable_difference: 0.028,
    }],
    segments: [{
      segment: { region, device }, rows: 42, share: 0.042, explored: false, top_action_share: 1, min_propensity: 1, ess: { uniform: 3.5 },
      drift_flags: options.hostile ? [SCRIPT] : [], status: 'fail',
    }],
    queries: [{ name: 'cube', sql: `SELECT region, count(*) FROM src WHERE region <> '${SQL_BREAK}' GROUP BY ALL`, scans_source: true }],
    cautions: CAUTIONS,
    run: { engine: 'native', started_at: '2024-05-02T10:00:00.000Z', seconds: 1.5, source_scans: 2 },
    signoff: null,
  };
}
