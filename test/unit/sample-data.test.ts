import { mkdtemp, readdir, readFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  DEFAULT_DECISIONS, DEFAULT_SEED, SAMPLE_DATA_DIR, TARGET_POLICY_FILE, UsageError, generateSampleData, logFileName, parseCommandLine,
} from '../../sample-data/generate.ts';
import type { LogKind } from '../../sample-data/log.ts';
import { LOG_COLUMNS } from '../../sample-data/log.ts';
import type { PlantedDefect, SampleManifest } from '../../sample-data/manifest.ts';
import { openOfflineDuckDB, readLogCsvSql, sqlString } from '../../sample-data/parquet.ts';
import { PROMOTIONS } from '../../sample-data/scenario.ts';

type Row = Record<string, unknown>;
let duck: Awaited<ReturnType<typeof openOfflineDuckDB>>;
let regenerated: string;
const manifests: Partial<Record<LogKind, SampleManifest>> = {};

async function rows(sql: string): Promise<Row[]> {
  return (await duck.connection.runAndReadAll(sql)).getRowObjectsJS() as Row[];
}
async function one(sql: string): Promise<Row> {
  const [first] = await rows(sql);
  if (!first) throw new Error(`no row from ${sql}`);
  return first;
}
const num = (value: unknown): number => Number(value);
const source = (dir: string, kind: LogKind, format: 'csv' | 'parquet'): string => {
  const path = join(dir, logFileName(kind, format));
  return format === 'csv' ? readLogCsvSql(path) : `read_parquet(${sqlString(path)})`;
};
const committed = (kind: LogKind): string => source(SAMPLE_DATA_DIR, kind, 'parquet');
const ts = (iso: string): string => `TIMESTAMP ${sqlString(iso.replace('T', ' ').replace('Z', ''))}`;
const defect = (kind: string): PlantedDefect => {
  const found = manifests.demo?.defects.find((d) => d.kind === kind);
  if (!found) throw new Error(`demo manifest has no ${kind} defect`);
  return found;
};

/** An order-independent digest of every value (NULL spelled out), so CSV, Parquet and regenerated files compare by content. */
const digests = new Map<string, Promise<{ n: number; digest: string }>>();
function contentDigest(from: string): Promise<{ n: number; digest: string }> {
  let digest = digests.get(from);
  if (!digest) digests.set(from, digest = computeDigest(from));
  return digest;
}
async function computeDigest(from: string): Promise<{ n: number; digest: string }> {
  const line = LOG_COLUMNS.map((c) => `coalesce(CAST("${c.name}" AS VARCHAR), '<null>')`).join(`, '|', `);
  const r = await one(`SELECT count(*) AS n, md5(string_agg(line, chr(10) ORDER BY line)) AS digest
    FROM (SELECT concat(${line}) AS line FROM ${from})`);
  return { n: num(r.n), digest: String(r.digest) };
}

/**
 * B_a = (1/n) Σ 1{A_i = a}/p_i with its standard error, per promotion. When every p_i is the true
 * probability of the logged action and a has positive probability everywhere, E[B_a] = 1
 * (Horvitz & Thompson 1952, JASA 47:663, unbiasedness of inverse-probability weighting; README.md, "What the audit checks": balance.weights).
 */
async function balance(from: string, where: string, groupBy = ''): Promise<Row[]> {
  const actions = `[${PROMOTIONS.map(sqlString).join(', ')}]`;
  const keys = groupBy ? `${groupBy}, ` : '';
  return rows(`SELECT ${keys}a, avg(x) AS b, stddev_samp(x) / sqrt(count(*)) AS se, count(*) AS n FROM (
      SELECT ${keys}a, CASE WHEN promotion = a THEN 1 / propensity ELSE 0 END AS x
      FROM ${from}, (SELECT unnest(${actions}) AS a) WHERE ${where})
    GROUP BY ALL ORDER BY ALL`);
}

beforeAll(async () => {
  regenerated = await mkdtemp(join(tmpdir(), 'cw-sample-'));
  await generateSampleData({ decisions: DEFAULT_DECISIONS, out: regenerated, seed: DEFAULT_SEED, formats: ['csv', 'parquet'], logs: ['demo', 'clean', 'next'] });
  duck = await openOfflineDuckDB();
  for (const kind of ['demo', 'clean', 'next'] as const) {
    manifests[kind] = JSON.parse(await readFile(join(SAMPLE_DATA_DIR, logFileName(kind, 'manifest.json')), 'utf8')) as SampleManifest;
  }
});

afterAll(async () => {
  duck?.close();
  await rm(regenerated, { recursive: true, force: true });
});

describe('sample data is deterministic', () => {
  it.each([
    ['demo', 'parquet'], ['demo', 'csv'], ['clean', 'parquet'], ['clean', 'csv'], ['next', 'parquet'], ['next', 'csv'],
  ] as const)('regenerating the %s log (%s) with the default seed reproduces the committed content', async (kind, format) => {
    const fresh = await contentDigest(source(regenerated, kind, format));
    const kept = await contentDigest(source(SAMPLE_DATA_DIR, kind, format));
    expect(fresh.n).toBe(manifests[kind]!.generator.rows);
    expect(fresh).toEqual(kept);
  });

  it.each(['demo', 'clean', 'next'] as const)('the committed %s CSV and Parquet hold the same values', async (kind) => {
    expect(await contentDigest(source(SAMPLE_DATA_DIR, kind, 'csv'))).toEqual(await contentDigest(source(SAMPLE_DATA_DIR, kind, 'parquet')));
  });

  it.each([logFileName('demo', 'manifest.json'), logFileName('clean', 'manifest.json'), logFileName('next', 'manifest.json'), TARGET_POLICY_FILE])(
    'regenerating reproduces %s byte for byte', async (name) => {
      expect(await readFile(join(regenerated, name), 'utf8')).toBe(await readFile(join(SAMPLE_DATA_DIR, name), 'utf8'));
    },
  );

  it.each(['demo', 'clean', 'next'] as const)('the %s Parquet file has the manifest column names and types', async (kind) => {
    const described = await rows(`DESCRIBE SELECT * FROM ${committed(kind)}`);
    expect(described.map((r) => ({ name: r.column_name, type: r.column_type }))).toEqual(manifests[kind]!.columns);
  });
});

describe('the week after the demo log matches its manifest', () => {
  const next = (): string => committed('next');
  const planted = (kind: string, region?: string): PlantedDefect => {
    const found = manifests.next!.defects.find((d) => d.kind === kind && (region === undefined || d.segment.region === region));
    if (!found) throw new Error(`next manifest has no ${kind} defect`);
    return found;
  };

  it('covers the seven days after the demo log and switches to v8.1 on day 4', async () => {
    const r = await one(`SELECT strftime(min(logged_at), '%Y-%m-%d') AS lo, strftime(max(logged_at), '%Y-%m-%d') AS hi, strftime(min(logged_at) FILTER (WHERE policy_version = 'v8.1'), '%Y-%m-%d') AS v81 FROM ${next()}`);
    expect(String(r.lo)).toMatch(/^2026-04-01/);
    expect(String(r.hi)).toMatch(/^2026-04-07/);
    expect(String(r.v81)).toMatch(/^2026-04-04/);
  });

  it('is greedy in east-ridge on ios, as planted', async () => {
    const d = planted('propensity.exploration', 'east-ridge');
    const r = await one(`SELECT count(*) FILTER (WHERE promotion = 'produce-box' AND propensity = 1) AS greedy, count(*) AS n FROM ${next()} WHERE region = 'east-ridge' AND device = 'ios'`);
    expect(num(r.greedy)).toBe(d.rows_affected);
    expect(num(r.n)).toBe(d.rows_affected);
  });

  it('v8.1 logs half the probability of recipe-kit: B is near 2 for it and near 1 for the others (Horvitz-Thompson)', async () => {
    const b = await balance(next(), "policy_version = 'v8.1' AND region <> 'riverside' AND NOT (region = 'old-town' AND device = 'web') AND NOT (region = 'east-ridge' AND device = 'ios')");
    for (const row of b) {
      const expected = row.a === 'recipe-kit' ? 2 : 1;
      expect(Math.abs(num(row.b) - expected), String(row.a)).toBeLessThan(4 * num(row.se) + 1e-9);
    }
  });
});

describe('candidate policy v9', () => {
  const table = `read_csv(${sqlString(join(SAMPLE_DATA_DIR, TARGET_POLICY_FILE))}, header = true, auto_detect = false,
    columns = {'region': 'VARCHAR', 'device': 'VARCHAR', 'tenure': 'VARCHAR', 'promotion': 'VARCHAR', 'probability': 'DOUBLE'})`;

  it('gives all 7 promotions to each of the 72 segments, with probabilities in (0, 1) summing to 1 within 1e-12', async () => {
    const segments = await rows(`SELECT region, device, tenure, count(DISTINCT promotion) AS k, sum(probability) AS total,
      min(probability) AS lo, max(probability) AS hi FROM ${table} GROUP BY ALL`);
    expect(segments).toHaveLength(72);
    for (const s of segments) {
      expect(num(s.k)).toBe(7);
      expect(Math.abs(num(s.total) - 1)).toBeLessThan(1e-12);
      expect(num(s.lo)).toBeGreaterThan(0);
      expect(num(s.hi)).toBeLessThan(1);
    }
  });

  it('puts mass on promotions the demo log never shows in old-town on web (deficient support)', async () => {
    const r = await one(`SELECT sum(probability) AS mass FROM ${table}
      WHERE region = 'old-town' AND device = 'web' AND promotion <> 'free-delivery'`);
    // 4 tenures; each keeps well over a third of its mass off free-delivery.
    expect(num(r.mass)).toBeGreaterThan(4 / 3);
    const seen = await one(`SELECT count(DISTINCT promotion) AS k FROM ${committed('demo')} WHERE region = 'old-town' AND device = 'web'`);
    expect(num(seen.k)).toBe(1);
  });
});

describe('the demo manifest matches the demo log', () => {
  const demo = (): string => committed('demo');

  it('lists exactly the seven planted defects of sample-data/README.md, by the check meant to find each', () => {
    expect(manifests.demo!.defects.map((d) => d.kind).sort()).toEqual([
      'balance.weights', 'drift.reward', 'identity.duplicates', 'propensity.exploration', 'propensity.range', 'reward.validity', 'support.floor',
    ]);
    expect(manifests.clean!.defects).toEqual([]);
  });

  it('propensity.exploration: every old-town web row is free-delivery at propensity 1, and nowhere else is p = 1', async () => {
    const d = defect('propensity.exploration');
    const r = await one(`SELECT count(*) FILTER (WHERE region = 'old-town' AND device = 'web') AS seg,
      count(*) FILTER (WHERE region = 'old-town' AND device = 'web' AND promotion = 'free-delivery' AND propensity = 1) AS greedy,
      count(*) FILTER (WHERE NOT (region = 'old-town' AND device = 'web') AND propensity = 1) AS elsewhere FROM ${demo()}`);
    expect(num(r.seg)).toBe(d.rows_affected);
    expect(num(r.greedy)).toBe(d.rows_affected);
    expect(num(r.elsewhere)).toBe(0);
    // README.md, "What the audit checks", fails the check for a segment holding >= 1% of rows.
    expect(num(r.seg) / manifests.demo!.generator.rows).toBeGreaterThan(0.01);
  });

  it('propensity.range: all android rows on days 9-10, and only they, have a NULL or 0 propensity', async () => {
    const d = defect('propensity.range');
    const inWindow = `device = 'android' AND logged_at >= ${ts(d.window!.from)} AND logged_at < ${ts(d.window!.to)}`;
    const r = await one(`SELECT count(*) FILTER (WHERE ${inWindow}) AS win,
      count(*) FILTER (WHERE ${inWindow} AND propensity IS NULL) AS nulls,
      count(*) FILTER (WHERE ${inWindow} AND propensity = 0) AS zeros,
      count(*) FILTER (WHERE NOT (${inWindow}) AND (propensity IS NULL OR propensity <= 0 OR propensity > 1)) AS outside
      FROM ${demo()}`);
    expect(num(r.win)).toBe(d.rows_affected);
    expect(num(r.nulls) + num(r.zeros)).toBe(d.rows_affected);
    expect(num(r.nulls)).toBe(d.magnitude.null_rows);
    expect(num(r.zeros)).toBe(d.magnitude.zero_rows);
    expect(num(r.outside)).toBe(0);
  });

  it('balance.weights: riverside after v8 is off balance, with the manifest values; correctly logged v8 rows are not', async () => {
    const d = defect('balance.weights');
    const v8 = `logged_at >= ${ts(d.window!.from)}`;
    const stale = await balance(demo(), `region = 'riverside' AND ${v8}`);
    const expected = d.magnitude.balance_by_action as Record<string, number>;
    expect(num(stale[0]!.n)).toBe(d.rows_affected);
    for (const s of stale) expect(num(s.b)).toBeCloseTo(expected[String(s.a)]!, 4);
    expect(stale.filter((s) => Math.abs(num(s.b) - 1) > 4 * num(s.se) && Math.abs(num(s.b) - 1) > 0.1).length).toBeGreaterThanOrEqual(3);
    // Other regions after the switch log v8 correctly; old-town web is left out because the greedy policy gives other promotions no support there.
    const fine = await balance(demo(), `region <> 'riverside' AND NOT (region = 'old-town' AND device = 'web') AND ${v8}`);
    for (const s of fine) expect(Math.abs(num(s.b) - 1)).toBeLessThan(4 * num(s.se));
  });

  it('drift.reward: lapsed customers order half as often from day 21 as the same decisions do in the clean log', async () => {
    const d = defect('drift.reward');
    const from = ts(d.window!.from);
    const missingFrom = ts(defect('reward.validity').window!.from);
    const paired = `(SELECT DISTINCT * FROM ${demo()}) m JOIN ${committed('clean')} c USING (decision_id)
      WHERE m.tenure = 'lapsed' AND NOT (m.region = 'old-town' AND m.device = 'web')`;
    const after = await one(`SELECT sum(m.ordered) AS demo, sum(c.ordered) AS clean FROM ${paired} AND m.logged_at >= ${from} AND m.logged_at < ${missingFrom}`);
    const before = await one(`SELECT sum(m.ordered) AS demo, sum(c.ordered) AS clean FROM ${paired} AND m.logged_at < ${from}`);
    expect(num(before.demo)).toBe(num(before.clean));
    // Same uniforms, threshold halved: the demo's orders are a Binomial(clean orders, 1/2) thinning.
    const ratio = num(after.demo) / num(after.clean);
    expect(Math.abs(ratio - 0.5)).toBeLessThan(4 * Math.sqrt(0.25 / num(after.clean)));
    const counted = await one(`SELECT count(*) AS n, avg(ordered) AS rate FROM ${demo()} WHERE tenure = 'lapsed' AND logged_at >= ${from} AND ordered IS NOT NULL`);
    expect(num(counted.n)).toBe(d.rows_affected);
    expect(num(counted.rate)).toBeCloseTo(d.magnitude.ordered_rate_after as number, 5);
  });

  it('identity.duplicates: 0.3% of decision ids appear twice, as exact copies', async () => {
    const d = defect('identity.duplicates');
    const r = await one(`SELECT count(*) AS n, count(DISTINCT decision_id) AS ids,
      (SELECT count(*) FROM (SELECT DISTINCT * FROM ${demo()})) AS distinct_rows,
      (SELECT count(*) FROM (SELECT decision_id FROM ${demo()} GROUP BY 1 HAVING count(*) > 1)) AS duplicated FROM ${demo()}`);
    expect(num(r.n) - num(r.ids)).toBe(d.rows_affected);
    expect(num(r.duplicated)).toBe(d.magnitude.duplicated_ids);
    expect(num(r.distinct_rows)).toBe(num(r.ids));
    expect(num(r.ids)).toBe(manifests.demo!.generator.decisions);
    expect(num(r.duplicated) / num(r.ids)).toBeCloseTo(0.003, 4);
  });

  it('reward.validity: ordered and basket_value are NULL exactly in the last 36 hours', async () => {
    const d = defect('reward.validity');
    const late = `logged_at >= ${ts(d.window!.from)}`;
    const r = await one(`SELECT count(*) FILTER (WHERE ${late}) AS late,
      count(*) FILTER (WHERE ${late} AND ordered IS NULL AND basket_value IS NULL) AS missing,
      count(*) FILTER (WHERE NOT (${late}) AND (ordered IS NULL OR basket_value IS NULL)) AS early FROM ${demo()}`);
    expect(num(r.late)).toBe(d.rows_affected);
    expect(num(r.missing)).toBe(d.rows_affected);
    expect(num(r.early)).toBe(0);
    expect(d.window!.to).toBe(manifests.demo!.time.end);
    expect(Date.parse(d.window!.to) - Date.parse(d.window!.from)).toBe(36 * 3_600_000);
  });

  it('support.floor: household among new customers is logged at 0.002, every other logged propensity is at least 0.01', async () => {
    const d = defect('support.floor');
    const cell = `tenure = 'new' AND promotion = 'household'`;
    const r = await one(`SELECT count(*) FILTER (WHERE ${cell} AND propensity = 0.002) AS floor,
      count(*) FILTER (WHERE ${cell} AND propensity > 0 AND propensity <> 0.002) AS other,
      min(propensity) FILTER (WHERE NOT (${cell}) AND propensity > 0) AS lowest FROM ${demo()}`);
    expect(num(r.floor)).toBe(d.rows_affected);
    expect(num(r.floor)).toBeGreaterThan(20);
    expect(num(r.other)).toBe(0);
    expect(num(r.lowest)).toBeGreaterThanOrEqual(0.01);
  });

  it('plants nothing else: outside the planted segments and windows each demo row equals the clean row of the same decision', async () => {
    const m = manifests.demo!;
    const window = (kind: string): string => `m.logged_at >= ${ts(defect(kind).window!.from)}`;
    const planted = [
      `(m.region = 'old-town' AND m.device = 'web')`,
      `m.tenure = 'new'`,
      `(m.device = 'android' AND m.logged_at >= ${ts(defect('propensity.range').window!.from)} AND m.logged_at < ${ts(defect('propensity.range').window!.to)})`,
      `(m.region = 'riverside' AND ${window('balance.weights')})`,
      `(m.tenure = 'lapsed' AND ${window('drift.reward')})`,
      window('reward.validity'),
    ].join(' OR ');
    const columns = LOG_COLUMNS.map((c) => c.name);
    const same = (cols: string[]): string => cols.map((c) => `m."${c}" IS NOT DISTINCT FROM c."${c}"`).join(' AND ');
    const r = await one(`SELECT count(*) AS n,
      count(*) FILTER (WHERE NOT (${planted})) AS untouched,
      count(*) FILTER (WHERE NOT (${planted}) AND NOT (${same(columns)})) AS changed,
      count(*) FILTER (WHERE NOT (${same(['logged_at', 'region', 'device', 'tenure', 'policy_version'])})) AS context_changed
      FROM (SELECT DISTINCT * FROM ${committed('demo')}) m FULL JOIN ${committed('clean')} c USING (decision_id)`);
    expect(num(r.n)).toBe(m.generator.decisions);
    expect(num(r.changed)).toBe(0);
    expect(num(r.context_changed)).toBe(0);
    expect(num(r.untouched)).toBeGreaterThan(0.4 * m.generator.decisions);
  });
});

describe('the clean log is a correct log', () => {
  const clean = (): string => committed('clean');

  it('has unique ids, every propensity in [0.01, 1], every reward present, and basket_value > 0 exactly when ordered', async () => {
    const r = await one(`SELECT count(*) AS n, count(DISTINCT decision_id) AS ids,
      count(*) FILTER (WHERE propensity IS NULL OR NOT (propensity >= 0.01 AND propensity <= 1)) AS bad_p,
      count(*) FILTER (WHERE ordered IS NULL OR basket_value IS NULL) AS missing,
      count(*) FILTER (WHERE (ordered = 1) <> (basket_value > 0)) AS inconsistent,
      count(*) FILTER (WHERE ordered NOT IN (0, 1)) AS not_binary FROM ${clean()}`);
    expect(num(r.n)).toBe(manifests.clean!.generator.decisions);
    expect(num(r.ids)).toBe(num(r.n));
    expect(num(r.bad_p)).toBe(0);
    expect(num(r.missing)).toBe(0);
    expect(num(r.inconsistent)).toBe(0);
    expect(num(r.not_binary)).toBe(0);
  });

  it('spans 30 days from 2026-03-02 with v7 before day 16 and v8 from it', async () => {
    const m = manifests.clean!;
    const r = await one(`SELECT min(logged_at) >= ${ts(m.time.start)} AND max(logged_at) < ${ts(m.time.end)} AS inside,
      count(*) FILTER (WHERE (policy_version = 'v8') <> (logged_at >= ${ts(m.policy_switch_at)})) AS wrong_version,
      count(DISTINCT CAST(logged_at AS DATE)) AS days FROM ${clean()}`);
    expect(r.inside).toBe(true);
    expect(num(r.wrong_version)).toBe(0);
    expect(num(r.days)).toBe(30);
  });

  it('E[1{A=a}/p] = 1 for every promotion within 4 standard errors, overall and per policy version', async () => {
    const overall = await balance(clean(), 'true');
    const byVersion = await balance(clean(), 'true', 'policy_version');
    expect(overall).toHaveLength(7);
    expect(byVersion).toHaveLength(14);
    for (const s of [...overall, ...byVersion]) expect(Math.abs(num(s.b) - 1)).toBeLessThan(4 * num(s.se));
  });
});

describe('generator options', () => {
  it.each([
    [['--rows', 'abc'], /--rows must be a whole number/],
    [['--rows', '0'], /--rows must be between 1/],
    [['--seed=-3'], /--seed must be a whole number/],
    [['--seed', '4294967296'], /--seed must be between 0 and 4294967295/],
    [['--formats', 'parquet,xml'], /--formats takes a comma-separated subset/],
    [['--clean-only', '--demo-only'], /exclude each other/],
    [['--colour'], /Unknown option/],
  ])('rejects %j with a specific message', (argv, message) => {
    expect(() => parseCommandLine(argv)).toThrow(UsageError);
    expect(() => parseCommandLine(argv)).toThrow(message);
  });

  it('defaults to every log, both formats and the committed folder', () => {
    expect(parseCommandLine([])).toEqual({
      decisions: DEFAULT_DECISIONS, seed: DEFAULT_SEED, out: SAMPLE_DATA_DIR, formats: ['parquet', 'csv'], logs: ['demo', 'clean', 'next'],
    });
  });

  it('writes Parquet alone without leaving the intermediate CSV behind', async () => {
    const dir = await mkdtemp(join(tmpdir(), 'cw-sample-pq-'));
    try {
      const result = await generateSampleData({ decisions: 2000, out: dir, seed: 7, formats: ['parquet'], logs: ['clean'] });
      expect((await readdir(dir)).sort()).toEqual([logFileName('clean', 'manifest.json'), logFileName('clean', 'parquet'), TARGET_POLICY_FILE].sort());
      expect(result.manifests.clean!.generator.rows).toBe(2000);
      const r = await one(`SELECT count(*) AS n FROM read_parquet(${sqlString(join(dir, logFileName('clean', 'parquet')))})`);
      expect(num(r.n)).toBe(2000);
    } finally {
      await rm(dir, { recursive: true, force: true });
    }
  });
});
