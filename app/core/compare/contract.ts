/**
 * The comparison contract "counterweight.comparison/1": what changed between a baseline report and a newer
 * one. Defined once here as zod schemas; the types are inferred and the JSON Schema
 * (app/core/model/comparison.schema.json) is generated from them (`npm run schemas`).
 */
import { z } from 'zod';
import { EstimateSchema, MetricsSchema, SegmentSchema, StatusSchema, TimeWindowSchema, VerdictSchema } from '../model/report.ts';

export const COMPARISON_SCHEMA_ID = 'counterweight.comparison/1';

function record<S extends z.core.$ZodLooseShape>(shape: S) {
  return z.strictObject(shape).readonly();
}
function list<T extends z.ZodType>(item: T) {
  return z.array(item).readonly();
}
const nullable = <T extends z.ZodType>(schema: T) => z.union([schema, z.null()]);
const scalar = nullable(z.union([z.number(), z.string(), z.boolean()]));

/** How a thing moved from the baseline to the current report. `changed` when the two cannot be ordered. */
export const CHANGES = ['same', 'worse', 'better', 'changed', 'added', 'removed'] as const;
export const ChangeSchema = z.enum(CHANGES);
export type Change = z.infer<typeof ChangeSchema>;

/** A status as written in either report; a later report may use a status this contract does not list. */
const AnyStatus = z.union([StatusSchema, z.string()]);

export const SideSchema = record({
  files: list(record({ path: z.string(), sha256: z.string() })),
  rows: z.number().int().min(0),
  tool_version: z.string(),
  started_at: z.string(),
  verdict: VerdictSchema,
  /** First and last timestamp of the log (time.coverage), when the log has a time role. */
  span: nullable(record({ from: z.string(), to: z.string() })),
});
export type Side = z.infer<typeof SideSchema>;

export const ISSUE_KINDS = ['same-log', 'overlapping-logs', 'tool-version', 'roles', 'targets', 'settings', 'checks'] as const;
export const IssueSchema = record({
  kind: z.enum(ISSUE_KINDS),
  message: z.string(),
});
export type ComparabilityIssue = z.infer<typeof IssueSchema>;

export const MetricDeltaSchema = record({
  name: z.string(),
  baseline: scalar,
  current: scalar,
  /** current − baseline, when both are numbers. */
  delta: nullable(z.number()),
});
export type MetricDelta = z.infer<typeof MetricDeltaSchema>;

export const CheckChangeSchema = record({
  id: z.string(),
  title: z.string(),
  baseline: nullable(AnyStatus),
  current: nullable(AnyStatus),
  change: ChangeSchema,
  metrics: list(MetricDeltaSchema),
});
export type CheckChange = z.infer<typeof CheckChangeSchema>;

export const FindingSideSchema = record({
  status: AnyStatus,
  window: TimeWindowSchema.optional(),
  /** The finding's size: the value of `size_metric` in this report. */
  size: nullable(z.number()),
  message: z.string(),
  metrics: MetricsSchema,
  /** SQL selecting the rows behind the finding in that report's log. */
  sql: z.string().optional(),
});

/**
 * `unlisted`: the finding is in one report only, and the other report's check listed only its first findings
 * (its `findings_not_listed` metric is above 0), so whether it is still there cannot be told from the reports.
 */
export const FINDING_STATES = ['new', 'resolved', 'persisting', 'unlisted'] as const;
export const FindingChangeSchema = record({
  check: z.string(),
  segment: SegmentSchema,
  action: z.string().optional(),
  target: z.string().optional(),
  /** The finding's scope within its check (for example "segment" or "policy version"), when it has one. */
  scope: z.string().optional(),
  state: z.enum(FINDING_STATES),
  change: ChangeSchema,
  size_metric: z.string(),
  baseline: nullable(FindingSideSchema),
  current: nullable(FindingSideSchema),
  /** Whether this change is a regression (exit status 2 with --fail-on regression). */
  regression: z.boolean(),
});
export type FindingChange = z.infer<typeof FindingChangeSchema>;

export const ValueDeltaSchema = record({
  baseline: nullable(z.number()),
  current: nullable(z.number()),
  delta: nullable(z.number()),
});
export type ValueDelta = z.infer<typeof ValueDeltaSchema>;

export const EstimateChangeSchema = record({
  baseline: EstimateSchema,
  current: EstimateSchema,
  /** current − baseline. */
  difference: nullable(z.number()),
  /** √(se_baseline² + se_current²). */
  se: nullable(z.number()),
  z: nullable(z.number()),
  p_value: nullable(z.number()),
  /** The two estimates differ beyond their combined uncertainty (two-sided p below `alpha`). */
  differs: z.boolean(),
});
export type EstimateChange = z.infer<typeof EstimateChangeSchema>;

export const TargetChangeSchema = record({
  name: z.string(),
  presence: z.enum(['both', 'baseline only', 'current only']),
  ess: ValueDeltaSchema,
  ess_fraction: ValueDeltaSchema,
  khat: ValueDeltaSchema,
  support_deficit: ValueDeltaSchema,
  max_weight: ValueDeltaSchema,
  ips: nullable(EstimateChangeSchema),
  snips: nullable(EstimateChangeSchema),
  dr: nullable(EstimateChangeSchema),
});
export type TargetChange = z.infer<typeof TargetChangeSchema>;

export const SegmentChangeSchema = record({
  segment: SegmentSchema,
  baseline: nullable(AnyStatus),
  current: nullable(AnyStatus),
  change: ChangeSchema,
  rows: ValueDeltaSchema,
  explored: record({ baseline: nullable(z.boolean()), current: nullable(z.boolean()) }),
  regression: z.boolean(),
});
export type SegmentChange = z.infer<typeof SegmentChangeSchema>;

/** One line of "what got worse" or "what got better", in plain words, pointing at its detail. */
export const HeadlineSchema = record({
  kind: z.enum(['verdict', 'check', 'finding', 'segment', 'estimate']),
  check: z.string().optional(),
  segment: SegmentSchema.optional(),
  action: z.string().optional(),
  target: z.string().optional(),
  regression: z.boolean(),
  message: z.string(),
});
export type Headline = z.infer<typeof HeadlineSchema>;

export const ComparisonSchema = record({
  schema: z.literal(COMPARISON_SCHEMA_ID),
  tool: record({ name: z.literal('counterweight'), version: z.string() }),
  baseline: SideSchema,
  current: SideSchema,
  /** False when anything below makes the two reports measure different things; stated before any change. */
  comparable: z.boolean(),
  issues: list(IssueSchema),
  verdict: record({ baseline: VerdictSchema, current: VerdictSchema, change: ChangeSchema }),
  /** Two-sided level of the estimate-difference test. */
  alpha: z.number().gt(0).lt(1),
  worse: list(HeadlineSchema),
  better: list(HeadlineSchema),
  regression: z.boolean(),
  checks: list(CheckChangeSchema),
  findings: list(FindingChangeSchema),
  targets: list(TargetChangeSchema),
  segments: list(SegmentChangeSchema),
  counts: record({
    new_findings: z.number().int().min(0),
    resolved_findings: z.number().int().min(0),
    persisting_findings: z.number().int().min(0),
    /** Findings in one report only whose check in the other report left findings off its capped list. */
    unlisted_findings: z.number().int().min(0),
    changed_checks: z.number().int().min(0),
    changed_segments: z.number().int().min(0),
    moved_estimates: z.number().int().min(0),
  }),
});
export type Comparison = z.infer<typeof ComparisonSchema>;

export const COMPARISON_KEYS = Object.keys(ComparisonSchema.unwrap().shape) as readonly (keyof Comparison)[];
