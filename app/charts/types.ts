/**
 * What the chart builders read. Structurally the report model's Series and TargetSummary subsets, declared
 * here so the builders depend on the narrowest shape (test/unit/report/charts.test.ts asserts the model's
 * types fit). Builders return plain ECharts option objects; rendering happens in the UI or app/report.
 */
export type ChartKind = 'bars' | 'lines' | 'heatmap' | 'histogram' | 'points';

export interface ChartSeries {
  readonly name: string;
  readonly kind: ChartKind;
  readonly x: readonly (string | number)[];
  readonly y?: readonly (string | number)[];
  readonly values: readonly (readonly (number | null)[])[];
  readonly labels?: readonly string[];
  readonly unit?: string;
  readonly null_reasons?: readonly (readonly (string | null)[])[];
  readonly row_notes?: readonly (string | null)[];
  readonly marks?: readonly { readonly x: string | number; readonly kind: 'policy-switch' | 'change-point'; readonly label: string }[];
}

export interface ChartEstimate {
  readonly value: number | null;
  readonly ci_low: number | null;
  readonly ci_high: number | null;
}

export interface ChartTarget {
  readonly name: string;
  readonly ips: ChartEstimate;
  readonly snips: ChartEstimate;
  readonly dr: ChartEstimate;
}

/** A plain ECharts option object (kept loose: the builders never import ECharts' types). */
export type ChartOption = Record<string, unknown>;

/**
 * Lines series: a label "<name>:ci_low" / "<name>:ci_high" pair is drawn as the 95% band of line "<name>";
 * labels "ci_low" / "ci_high" alone are the band of the first line.
 */
export const CI_LOW_SUFFIX = ':ci_low';
export const CI_HIGH_SUFFIX = ':ci_high';

/** One target's metrics over a history's reports (the history model's target rows, app/core/compare/history.ts). */
export interface ChartHistoryTarget {
  readonly name: string;
  readonly ess_fraction: readonly (number | null)[];
  readonly khat: readonly (number | null)[];
  readonly support_deficit: readonly (number | null)[];
  readonly snips: readonly (number | null)[];
  readonly snips_ci_low: readonly (number | null)[];
  readonly snips_ci_high: readonly (number | null)[];
}

/** One segment's readiness over a history's reports; null where a report does not hold the segment. */
export interface ChartHistorySegment {
  readonly segment: Readonly<Record<string, string>>;
  readonly statuses: readonly (string | null)[];
}

/** One cap of the weight-cap trade-off (the report's remedies.caps[].list entries). */
export interface ChartCap {
  readonly cap: number;
  readonly estimate: ChartEstimate;
  readonly bias_bound: number;
  readonly ess: number;
}
