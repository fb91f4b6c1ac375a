/**
 * The report model: the one value every face renders (UI, JSON, HTML, terminal). Field names are the
 * JSON contract "counterweight.report/1" and therefore snake_case.
 *
 * This file is the contract's only definition: each part is a zod schema, its TypeScript type is inferred
 * from it (`z.infer`), and the published JSON Schema (app/core/model/report.schema.json, printed by
 * `counterweight schema`) is generated from it by `npm run schemas` and held to it by
 * test/unit/report/contract.test.ts. To add a field, add it here once (DEVELOPERS.md, "Adding a report field").
 */
import { z } from 'zod';
import type { Cell } from '../table.ts';
import { REPORT_SCHEMA_ID } from './contract-ids.ts';
import { CHECK_IDS, type CheckId as RegisteredCheckId } from '../checks/registry.ts';
import { REMEDY_KINDS } from '../remedies/links.ts';

export { REPORT_SCHEMA_ID };

// ---- vocabularies ---------------------------------------------------------------------------------

/** `error`: the check could not run on this log (it threw); a blocking check that errors blocks the verdict. */
export const STATUSES = ['pass', 'warn', 'fail', 'skipped', 'error'] as const;
export const VERDICTS = ['supported', 'supported-with-caveats', 'not-supported'] as const;
/** Stable check ids, in audit order: the check registry's (app/core/checks/registry.ts), where each check is declared once. */
export { CHECK_IDS };

export const StatusSchema = z.enum(STATUSES);
export const VerdictSchema = z.enum(VERDICTS);
export const CheckIdSchema = z.enum(CHECK_IDS as unknown as readonly [RegisteredCheckId, ...RegisteredCheckId[]]).meta({ id: 'checkId' });
/** A finding or a segment is never "skipped". */
const OutcomeSchema = z.enum(['pass', 'warn', 'fail']);

export type Status = z.infer<typeof StatusSchema>;
export type Verdict = z.infer<typeof VerdictSchema>;
export type CheckId = RegisteredCheckId;

// ---- building blocks ------------------------------------------------------------------------------

/** A shape with exactly these keys; its inferred type has readonly properties. */
function record<S extends z.core.$ZodLooseShape>(shape: S) {
  return z.strictObject(shape).readonly();
}
function list<T extends z.ZodType>(item: T) {
  return z.array(item).readonly();
}
const nullable = <T extends z.ZodType>(schema: T) => z.union([schema, z.null()]);
const count = () => z.number().int().min(0);
const share = () => z.number().min(0).max(1);
export const RemedyKindSchema = z.enum(REMEDY_KINDS).meta({ id: 'remedyKind' });
/** The remedies (top-level `remedies`) that address a warning or failing reason or finding. */
const remedyLinks = () => list(RemedyKindSchema).optional().describe('Remedies (keys of the top-level remedies object) that address this.');
const ColumnSchema = nullable(z.string()).meta({ id: 'column' });
const column = () => ColumnSchema;

export const MetricsSchema = z.record(z.string(), z.union([z.number(), z.string(), z.boolean(), z.null()])).meta({ id: 'metrics' });
export type Metrics = z.infer<typeof MetricsSchema>;

export const SegmentSchema = z.record(z.string(), z.string()).meta({ id: 'segment' });

export const TimeWindowSchema = record({
  from: z.iso.datetime({ offset: true }).describe('ISO-8601 UTC'),
  to: z.iso.datetime({ offset: true }).describe('ISO-8601 UTC, exclusive'),
});
export type TimeWindow = z.infer<typeof TimeWindowSchema>;

/** A row value as the engine returned it (app/core/table.ts); in JSON, big integers are numbers or decimal strings. */
const CellSchema = z.custom<Cell>(() => true);

export const FindingSchema = record({
  segment: SegmentSchema,
  action: z.string().optional(),
  target: z.string().optional(),
  window: TimeWindowSchema.optional(),
  status: OutcomeSchema,
  metrics: MetricsSchema,
  message: z.string(),
  examples: list(z.record(z.string(), CellSchema)).optional()
    .describe('The earliest rows behind the finding (by time, then decision id), up to examples.per_finding.'),
  sql: z.string().optional().describe('SQL that selects the rows behind the finding from the source, for re-running.'),
  remedies: remedyLinks(),
}).meta({ id: 'finding' });
export type Finding = z.infer<typeof FindingSchema>;

/** One segment column's value, as the cube labels it ("(null)", a capped column's "(other)"). */
export const SegmentPartSchema = record({ column: z.string(), value: z.string() }).meta({ id: 'segment_part' });
export type SegmentPart = z.infer<typeof SegmentPartSchema>;

/**
 * Which segment each label of a series' segment axis stands for: `segments[i]` is the segment of label i of
 * `axis` (y of a segments × actions heatmap, x of bars by segment), its columns in segment-column order; an
 * empty list is all rows. The labels are for display only; readers take the segment from here.
 */
export const SegmentKeysSchema = record({
  axis: z.enum(['x', 'y']),
  segments: list(list(SegmentPartSchema)),
}).meta({ id: 'segment_keys' });
export type SegmentKeys = z.infer<typeof SegmentKeysSchema>;

/** Chart-ready series a check exposes for app/charts (never recomputed by a view). */
export const SeriesSchema = record({
  name: z.string(),
  kind: z.enum(['bars', 'lines', 'heatmap', 'histogram', 'points']),
  x: list(z.union([z.string(), z.number()])),
  y: list(z.union([z.string(), z.number()])).optional(),
  values: list(list(nullable(z.number()))),
  labels: list(z.string()).optional(),
  unit: z.string().optional(),
  /** heatmaps: beside each null value, why it is null (e.g. "never logged"); null where a value is present */
  null_reasons: list(list(nullable(z.string()))).optional(),
  /** series over segments: the segment behind each label of the segment axis (absent in reports written before it) */
  segment_keys: SegmentKeysSchema.optional(),
  /** heatmaps: beside each label of the y axis, what to say about that row (e.g. "not explored"); null where nothing */
  row_notes: list(nullable(z.string())).optional(),
  /** series over time: x values to mark, each with what happened there (a logging-policy version switch) */
  marks: list(record({ x: z.union([z.string(), z.number()]), kind: z.enum(['policy-switch', 'change-point']), label: z.string() })).optional(),
}).meta({ id: 'series' });
export type Series = z.infer<typeof SeriesSchema>;

export const CheckResultSchema = record({
  id: CheckIdSchema,
  title: z.string(),
  status: StatusSchema,
  summary: z.string(),
  metrics: MetricsSchema,
  findings: list(FindingSchema),
  series: list(SeriesSchema).optional(),
  settings_used: list(z.string()).describe('Settings keys this check used.'),
});
export type CheckResult = z.infer<typeof CheckResultSchema>;

export const EstimateSchema = record({
  value: nullable(z.number()),
  se: nullable(z.number()),
  ci_low: nullable(z.number()),
  ci_high: nullable(z.number()),
}).meta({ id: 'estimate' });
export type Estimate = z.infer<typeof EstimateSchema>;

export const TargetSummarySchema = record({
  name: z.string(),
  spec: z.string(),
  ess: z.number().min(0),
  ess_fraction: z.number().min(0),
  max_weight: z.number().min(0),
  top1_weight_share: share(),
  khat: nullable(z.number()),
  khat_threshold: z.number(),
  tail_length: count(),
  support_deficit: share(),
  ips: EstimateSchema,
  snips: EstimateSchema,
  dr: EstimateSchema,
  detectable_difference: nullable(z.number()),
});
export type TargetSummary = z.infer<typeof TargetSummarySchema>;

export const SegmentReadinessSchema = record({
  segment: SegmentSchema,
  rows: count(),
  share: share(),
  explored: z.boolean(),
  top_action_share: share(),
  min_propensity: nullable(z.number()),
  ess: z.record(z.string(), z.number()),
  drift_flags: list(z.string()),
  causes: list(z.string()).optional().describe('why the segment is not a pass, one plain line per cause; segments sharing a cause carry the same line'),
  status: OutcomeSchema,
});
export type SegmentReadiness = z.infer<typeof SegmentReadinessSchema>;

export const ReasonSchema = record({
  check: CheckIdSchema,
  status: z.enum(['warn', 'fail', 'error']),
  message: z.string(),
  remedies: remedyLinks(),
});
export type Reason = z.infer<typeof ReasonSchema>;

const SettingScalar = z.union([z.number(), z.string(), z.boolean()]);
export const SettingValueSchema = record({
  value: SettingScalar,
  default: SettingScalar,
  source: z.string().min(1),
  description: z.string(),
});
export type SettingValue = z.infer<typeof SettingValueSchema>;

export const RolesReportSchema = record({
  decision_id: column(),
  time: column(),
  action: column(),
  propensity: column(),
  reward: column(),
  segments: list(z.string()),
  policy_version: column(),
  target_propensity: column(),
  propensity_vector: column(),
  action_set_size: column(),
  reasons: z.record(z.string(), z.string()).describe('Why each role was chosen: "override" or the suggestion\'s reason.'),
  caps: z.record(z.string(), record({ distinct: z.number().int(), kept: z.number().int() }))
    .describe('Segment columns over the cap: column -> {distinct, kept}; never silent.'),
});
export type RolesReport = z.infer<typeof RolesReportSchema>;

export const InputFileSchema = record({
  path: z.string(),
  bytes: count(),
  sha256: z.string().regex(/^[0-9a-f]{64}$/),
  modified: z.string().optional(),
});
export type InputFile = z.infer<typeof InputFileSchema>;

/**
 * A table in a database server as the log (no files): where it lives, the filter that picked its rows, and
 * the source fingerprint a re-audit compares (row count and an order-independent hash sum over the role
 * columns, app/core/scan/fingerprint.ts). No credentials.
 */
export const InputTableSchema = record({
  engine: z.string(),
  server: z.string(),
  server_version: z.string(),
  database: z.string(),
  table: z.string(),
  where: nullable(z.string()),
  fingerprint: record({ rows: count(), hash: z.string().regex(/^\d+$/), columns: list(z.string()), method: z.string() }),
});
export type InputTable = z.infer<typeof InputTableSchema>;

export const QueryRecordSchema = record({
  name: z.string(),
  sql: z.string(),
  scans_source: z.boolean(),
});
export type QueryRecord = z.infer<typeof QueryRecordSchema>;

export const SignoffSchema = record({
  reviewer: z.string().min(1),
  decision: z.enum(['approve', 'approve-with-conditions', 'reject']),
  note: z.string(),
  signed_at: z.string(),
  digest: z.string().regex(/^[0-9a-f]{64}$/),
  signature: record({ algorithm: z.literal('ed25519'), public_key: z.string(), value: z.string() }).optional(),
});
export type Signoff = z.infer<typeof SignoffSchema>;

export const RunSchema = record({
  engine: z.string(),
  started_at: z.string(),
  seconds: z.number().min(0),
  source_scans: count(),
  /** the auditing process's peak resident memory in MB (the kernel's maximum RSS), where the engine can tell */
  peak_rss_mb: z.number().min(0).optional(),
}).describe('Timings and engine: the only part of a report allowed to differ between engines and runs.');

// ---- remedies -------------------------------------------------------------------------------------

const PairSchema = record({
  segment: SegmentSchema,
  action: z.string(),
  reason: z.enum(['never logged', 'below floor', 'too few rows']),
  rows: count(),
  min_propensity: nullable(z.number()),
});

export const RestrictedRemedySchema = record({
  target: z.string(),
  epsilon: z.number().describe('propensity floor of the region (support.floor.epsilon)'),
  min_rows: count().describe('rows a segment × action pair needs to be in the region (remedies.support.min_rows)'),
  pairs: count().describe('segment × action pairs considered'),
  excluded_count: count(),
  excluded: list(PairSchema).describe('pairs outside the region (the first remedies.max_listed)'),
  mass_inside: nullable(share()).describe("share of the target's probability mass on the region; null for a target column"),
  estimate: EstimateSchema.describe("the target's mean reward over its choices inside the region (SNIPS)"),
  ips: EstimateSchema,
  snips: EstimateSchema,
  dr: EstimateSchema,
  variant: record({
    method: z.literal('off-support mass moved to the logging policy\'s choice'),
    estimate: EstimateSchema.describe('SNIPS of the variant over the whole log'),
    ips: EstimateSchema,
    snips: EstimateSchema,
  }),
  not_covered: z.string(),
  notes: list(z.string()),
});
export type RestrictedRemedy = z.infer<typeof RestrictedRemedySchema>;

export const CapSchema = record({
  cap: z.number(),
  estimate: EstimateSchema,
  bias_bound: z.number().min(0).describe('max |bias| of the clipped estimate: max(|r_min|, |r_max|) × clipped mass'),
  bias_low: z.number(),
  bias_high: z.number(),
  ess: z.number().min(0),
  clipped_rows: count(),
  clipped_mass: z.number().min(0),
  mse_bound: z.number().min(0).describe('bias_bound² + se²'),
});

export const CapsRemedySchema = record({
  target: z.string(),
  exact_above: z.number().describe('every cap at or above this is exact: the clip query listed every row with a larger weight'),
  list: list(CapSchema),
  best: nullable(CapSchema).describe('the cap minimising bias_bound² + se² over the grid and every listed weight'),
  notes: list(z.string()),
});
export type CapsRemedy = z.infer<typeof CapsRemedySchema>;

export const PlanRowSchema = record({
  target: z.string(),
  segment: SegmentSchema.describe('empty: the whole log, one share everywhere'),
  rows_per_day: z.number().min(0),
  share: share().describe('ε-greedy share η of the next logging policy'),
  floor: share().describe('the least propensity it guarantees, η / K'),
  days: nullable(z.number().min(0)).describe('days at the current traffic for the estimate to reach the detectable difference'),
  rows: nullable(z.number().min(0)),
  reachable: z.boolean().describe('days ≤ the planned days'),
  cost: z.number().describe("expected reward lost per decision against the logging policy's own choices"),
  logging_value: nullable(z.number()),
  sd: nullable(z.number()),
  current_floor: nullable(z.number()),
});
export type PlanRowReport = z.infer<typeof PlanRowSchema>;

export const RemediesSchema = record({
  reward_range: record({ min: z.number(), max: z.number(), source: z.string() }),
  plan_options: record({
    delta: z.record(z.string(), nullable(z.number())).describe('target -> detectable difference planned for'),
    power: z.number(),
    alpha: z.number(),
    days: z.number(),
    log_days: nullable(z.number()),
  }),
  restricted: list(RestrictedRemedySchema),
  caps: list(CapsRemedySchema),
  plan: list(PlanRowSchema),
  cautions: list(z.string()),
}).meta({ id: 'remedies' });
export type Remedies = z.infer<typeof RemediesSchema>;

// ---- the report -----------------------------------------------------------------------------------

/** Top-level keys in the order they are written (app/report/serialize.ts takes its order from here). */
export const ReportSchema = record({
  schema: z.literal(REPORT_SCHEMA_ID),
  tool: record({ name: z.literal('counterweight'), version: z.string() }),
  input: record({ files: list(InputFileSchema), format: z.string(), rows: count(), table: InputTableSchema.optional() }),
  roles: RolesReportSchema,
  settings: z.record(z.string(), SettingValueSchema),
  verdict: VerdictSchema,
  reasons: list(ReasonSchema),
  checks: z.array(CheckResultSchema).min(CHECK_IDS.length).max(CHECK_IDS.length).readonly(),
  targets: list(TargetSummarySchema),
  segments: list(SegmentReadinessSchema),
  remedies: RemediesSchema.optional().describe('What would make this usable: computed from the cube and the largest weights'),
  queries: list(QueryRecordSchema),
  cautions: z.array(z.string()).min(1).readonly(),
  run: RunSchema,
  signoff: nullable(SignoffSchema),
});
export type Report = z.infer<typeof ReportSchema>;

export const REPORT_KEYS = Object.keys(ReportSchema.unwrap().shape) as readonly (keyof Report)[];

/** Shown wherever results are shown. */
export const CAUTIONS: readonly string[] = [
  'Off-policy estimates inform decisions that affect people. A passing audit is necessary, not sufficient, for a trustworthy estimate.',
  'A log cannot show unmeasured confounding in contexts that were not logged, interference between units, or whether the reward measures what matters.',
  'A sign-off is the reviewer\'s judgement, not the tool\'s.',
];
