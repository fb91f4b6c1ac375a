/**
 * The next-log plan on the Remedies screen, recomputed in the page from the cube the audit already holds: the
 * core's planInputs once per target, then the core's planNextLog for every slider position. No engine request.
 */
import type { CubeCell } from '../../app/core/cube/types.ts';
import type { Remedies, Report } from '../../app/core/model/report.ts';
import { planInputs, planNextLog, planRow, type Plan, type PlanInputs, type PlanOptions } from '../../app/core/remedies/index.ts';
import { analyseTarget, cubeView } from '../../app/core/targets/analysis.ts';
import { parseTarget, type TargetInput } from '../../app/core/targets/targets.ts';

export interface PlanWorkspace {
  readonly cells: readonly CubeCell[];
  readonly targets: readonly TargetInput[];
  readonly logColumns: readonly string[];
}

/**
 * Per target the report planned for, what the plan needs from the cube; a target whose policy the page does not
 * hold (a report opened without its audit's inputs) is left out.
 */
export function planInputsByTarget(report: Report, workspace: PlanWorkspace): Map<string, PlanInputs> {
  const out = new Map<string, PlanInputs>();
  const remedies = report.remedies;
  const logDays = remedies?.plan_options.log_days ?? null;
  if (!remedies || logDays === null || workspace.cells.length === 0) return out;
  const view = cubeView(workspace.cells, report.roles.segments);
  const ctx = { actionColumn: report.roles.action ?? 'action', logColumns: workspace.logColumns, targetColumn: report.roles.target_propensity ?? null };
  const inputs: TargetInput[] = [{ spec: 'uniform' }, ...workspace.targets];
  for (const r of remedies.restricted) {
    for (const input of inputs) {
      try {
        const policy = parseTarget(input, ctx);
        if (policy.name !== r.target) continue;
        out.set(r.target, planInputs(analyseTarget(policy, view), view, logDays, remedies.reward_range.min, remedies.reward_range.max));
        break;
      } catch {
        // a target the page cannot rebuild is shown from the report's own plan only
      }
    }
  }
  return out;
}

export interface TimedPlan {
  readonly plan: Plan | null;
  readonly error: string | null;
  /** milliseconds planNextLog took */
  readonly ms: number;
}

export function timedPlan(inputs: PlanInputs, options: PlanOptions): TimedPlan {
  const started = performance.now();
  try {
    const plan = planNextLog(inputs, options);
    return { plan, error: null, ms: performance.now() - started };
  } catch (error) {
    return { plan: null, error: (error as Error).message, ms: performance.now() - started };
  }
}

/**
 * The report's remedies with the plan the sliders chose in place of the audit's (rows overall first, then each
 * segment, as the audit writes them): what the table shows and the exports write, through the same writers as
 * `audit --plan` (app/core/remedies/plan-table.ts).
 */
export function remediesWithPlan(remedies: Remedies, inputs: PlanInputs, plan: Plan): Remedies {
  const rows = [plan.overall, ...plan.segments].map((r) => planRow(inputs.target, inputs.segmentColumns, r));
  const { delta, power, alpha, days } = plan.options;
  return { ...remedies, plan_options: { ...remedies.plan_options, delta: { [inputs.target]: delta }, power, alpha, days }, plan: rows };
}
