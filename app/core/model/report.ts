/**
 * The report model: the one value every face renders (UI, JSON, HTML, terminal). Field names are the
 * JSON contract "counterweight.report/1" (README.md, "The report contract") and therefore snake_case. The JSON Schema is
 * app/core/model/report.schema.json; every report the tests produce is validated against it.
 */
import type { Cell } from '../table.ts';

export const REPORT_SCHEMA_ID = 'counterweight.report/1';

export type Status = 'pass' | 'warn' | 'fail' | 'skipped';
export type Verdict = 'supported' | 'supported-with-caveats' | 'not-supported';
export type CheckId =
  | 'schema.roles'
  | 'identity.duplicates'
  | 'time.coverage'
  | 'propensity.range'
  | 'propensity.exploration'
  | 'support.floor'
  | 'support.target'
  | 'balance.weights'
  | 'weights.ess'
  | 'weights.tail'
  | 'reward.validity'
  | 'drift.reward'
  | 'drift.policy'
  | 'estimate.preview';

export type Metrics = Record<string, number | string | boolean | null>;

export interface TimeWindow {
  readonly from: string; // ISO-8601 UTC
  readonly to: string; // ISO-8601 UTC, exclusive
}

export interface Finding {
  readonly segment: Record<string, string>;
  readonly action?: string;
  readonly window?: TimeWindow;
  readonly target?: string;
  readonly status: Exclude<Status, 'skipped' | 'pass'> | 'pass';
  readonly metrics: Metrics;
  readonly message: string;
  /** The earliest rows behind the finding (by time, then decision id), up to examples.per_finding, values as the engine returned them. */
  readonly examples?: readonly Record<string, Cell>[];
  /** SQL that selects the rows behind the finding from the source, for re-running. */
  readonly sql?: string;
}

/** Chart-ready series a check exposes for app/charts (never recomputed by a view). */
export interface Series {
  readonly name: string;
  readonly kind: 'bars' | 'lines' | 'heatmap' | 'histogram' | 'points';
  readonly x: readonly (string | number)[];
  readonly y?: readonly (string | number)[];
  readonly values: readonly (readonly (number | null)[])[];
  readonly labels?: readonly string[];
  readonly unit?: string;
}

export interface CheckResult {
  readonly id: CheckId;
  readonly title: string;
  readonly status: Status;
  readonly summary: string;
  readonly metrics: Metrics;
  readonly findings: readonly Finding[];
  readonly series?: readonly Series[];
  /** Settings keys this check used. */
  readonly settings_used: readonly string[];
}

export interface Estimate {
  readonly value: number | null;
  readonly se: number | null;
  readonly ci_low: number | null;
  readonly ci_high: number | null;
}

export interface TargetSummary {
  readonly name: string;
  readonly spec: string;
  readonly ess: number;
  readonly ess_fraction: number;
  readonly max_weight: number;
  readonly top1_weight_share: number;
  readonly khat: number | null;
  readonly khat_threshold: number;
  readonly tail_length: number;
  readonly support_deficit: number;
  readonly ips: Estimate;
  readonly snips: Estimate;
  readonly dr: Estimate;
  readonly detectable_difference: number | null;
}

export interface SegmentReadiness {
  readonly segment: Record<string, string>;
  readonly rows: number;
  readonly share: number;
  readonly explored: boolean;
  readonly top_action_share: number;
  readonly min_propensity: number | null;
  readonly ess: Record<string, number>;
  readonly drift_flags: readonly string[];
  readonly status: Exclude<Status, 'skipped'>;
}

export interface Reason {
  readonly check: CheckId;
  readonly status: 'warn' | 'fail';
  readonly message: string;
}

export interface SettingValue {
  readonly value: number | string | boolean;
  readonly default: number | string | boolean;
  readonly source: string;
  readonly description: string;
}

export interface RolesReport {
  readonly decision_id: string | null;
  readonly time: string | null;
  readonly action: string | null;
  readonly propensity: string | null;
  readonly reward: string | null;
  readonly segments: readonly string[];
  readonly policy_version: string | null;
  readonly target_propensity: string | null;
  readonly propensity_vector: string | null;
  readonly action_set_size: string | null;
  /** Why each role was chosen: "override" or the suggestion's reason. */
  readonly reasons: Record<string, string>;
  /** Segment columns over the cap: column -> {distinct, kept}. Never silent (README.md, "What the audit checks"). */
  readonly caps: Record<string, { readonly distinct: number; readonly kept: number }>;
}

export interface InputFile {
  readonly path: string;
  readonly bytes: number;
  readonly sha256: string;
  readonly modified?: string;
}

export interface QueryRecord {
  readonly name: string;
  readonly sql: string;
  readonly scans_source: boolean;
}

export interface Signoff {
  readonly reviewer: string;
  readonly decision: 'approve' | 'approve-with-conditions' | 'reject';
  readonly note: string;
  readonly signed_at: string;
  readonly digest: string;
  readonly signature?: { readonly algorithm: 'ed25519'; readonly public_key: string; readonly value: string };
}

export interface Report {
  readonly schema: typeof REPORT_SCHEMA_ID;
  readonly tool: { readonly name: 'counterweight'; readonly version: string };
  readonly input: { readonly files: readonly InputFile[]; readonly format: string; readonly rows: number };
  readonly roles: RolesReport;
  readonly settings: Record<string, SettingValue>;
  readonly verdict: Verdict;
  readonly reasons: readonly Reason[];
  readonly checks: readonly CheckResult[];
  readonly targets: readonly TargetSummary[];
  readonly segments: readonly SegmentReadiness[];
  readonly queries: readonly QueryRecord[];
  readonly cautions: readonly string[];
  /** Timings and engine: the only part of a report allowed to differ between engines and runs. */
  readonly run: { readonly engine: string; readonly started_at: string; readonly seconds: number; readonly source_scans: number };
  readonly signoff: Signoff | null;
}

/** README.md "Cautions", shown wherever results are shown. */
export const CAUTIONS: readonly string[] = [
  'Off-policy estimates inform decisions that affect people. A passing audit is necessary, not sufficient, for a trustworthy estimate.',
  'A log cannot show unmeasured confounding in contexts that were not logged, interference between units, or whether the reward measures what matters.',
  'A sign-off is the reviewer\'s judgement, not the tool\'s.',
];
