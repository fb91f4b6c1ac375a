import { useCallback, useMemo, useState } from 'react';
import type { Report } from '../../app/core/model/report.ts';
import type { AuditWorkspace } from '../engine/status.ts';
import { useEngine } from '../engine/EngineProvider.tsx';
import { cellSelection, cellSql, findingSelection, rowFeed } from '../engine/row-feed.ts';
import { RowPager } from '../components/RowPager.tsx';
import { SEQUENTIAL_RAMP } from '../../app/charts/palette.ts';
import { chartForSeries, heightForSeries } from '../charts.ts';
import { heatCellText, MAP_WINDOW_ROWS, windowedMapHeight, withRowWindow, withSelectedCell } from '../../app/charts/index.ts';
import { EChart } from '../components/EChart.tsx';
import { FindingList } from '../components/FindingList.tsx';
import { SqlBlock } from '../components/SqlBlock.tsx';
import { countText } from '../../app/core/count-words.ts';
import { findingsForCell, segmentHeatmaps, segmentOfRow, type CellFinding } from './segment-cells.ts';
import { ReadinessTable } from './ReadinessTable.tsx';

/** A cell of the table view and the cell panel: the chart's text, and a dash where the map has no value. */
const cellText = (v: number | null): string => (v === null ? '—' : heatCellText(v));
import { cubeVersions, regroupKey, useCubeRegroup } from './cube-regroup.ts';

interface Cell { readonly row: number; readonly col: number }

function valueRange(values: readonly (readonly (number | null)[])[]): [number, number] {
  const finite = values.flat().filter((v): v is number => v !== null && Number.isFinite(v));
  return finite.length === 0 ? [0, 1] : [Math.min(...finite), Math.max(...finite)];
}

/** The table twin of the chart: the same white-to-blue ramp, with the value printed in every cell. */
function cellStyle(v: number | null, [lo, hi]: [number, number]): { background: string; color: string } | undefined {
  if (v === null || !Number.isFinite(v)) return undefined;
  const t = hi > lo ? (v - lo) / (hi - lo) : 0;
  const colour = SEQUENTIAL_RAMP[Math.min(SEQUENTIAL_RAMP.length - 1, Math.floor(t * SEQUENTIAL_RAMP.length))] as string;
  return { background: colour, color: t > 0.6 ? '#ffffff' : '#1b1f24' };
}

export function SegmentMap({ report, workspace }: { report: Report; workspace?: AuditWorkspace | undefined }) {
  const columns = report.roles.segments;
  // Regrouping by a subset of the segment columns, or keeping one policy version, is SQL over the audit's
  // cube in the page's DuckDB-Wasm worker (no scan, no request to the engine).
  const [groupBy, setGroupBy] = useState<readonly string[]>(columns);
  const [version, setVersion] = useState<string | null>(null);
  const versions = useMemo(() => cubeVersions(workspace), [workspace]);
  const filter = useMemo(() => (version === null ? {} : { versions: [version] }), [version]);
  const regrouped = workspace !== undefined && (groupBy.length !== columns.length || version !== null);
  const regroup = useCubeRegroup(workspace, columns, groupBy, filter, regrouped);
  const regroupPending = regrouped && regroup.key !== regroupKey(groupBy, filter);
  const maps = useMemo(
    () => (regrouped && regroup.series ? regroup.series.map((series) => ({ check: 'propensity.exploration' as const, series })) : segmentHeatmaps(report)),
    [regrouped, regroup, report],
  );
  const toggle = (c: string) => {
    const next = groupBy.includes(c) ? groupBy.filter((x) => x !== c) : columns.filter((x) => x === c || groupBy.includes(x));
    setGroupBy(next);
    setCell(null);
    setWhich(0);
  };
  const chooseVersion = (v: string) => {
    setVersion(v === '' ? null : v);
    setCell(null);
    setWhich(0);
  };
  const [which, setWhich] = useState(0);
  const [cell, setCell] = useState<Cell | null>(null);
  const [asTable, setAsTable] = useState(false);
  const current = maps[which];
  const base = useMemo(() => (current ? chartForSeries(current.series) : null), [current]);
  // dozens of segment rows scroll inside the map, so the action names over and under it stay in view
  const option = useMemo(() => (base && current ? withRowWindow(withSelectedCell(base as Record<string, unknown>, cell), current.series.values.length) : null), [base, cell, current]);
  const onChartClick = useCallback((data: unknown) => {
    if (Array.isArray(data) && typeof data[0] === 'number' && typeof data[1] === 'number') setCell({ col: data[0], row: data[1] });
  }, []);

  if (!current) {
    return (
      <section className="screen" aria-labelledby="segments-title">
        <h1 id="segments-title">Segment map</h1>
        <p className="muted">This report has no segment × action map (no segment columns were mapped, or the checks that draw it were skipped).</p>
        <ReadinessTable report={report} />
      </section>
    );
  }
  const { series } = current;
  const range = valueRange(series.values);
  const ys = series.y ?? [];
  const rowLabel = cell ? String(ys[cell.row] ?? '') : '';
  const action = cell ? String(series.x[cell.col] ?? '') : '';
  const segment = cell ? segmentOfRow(series, cell.row) : null;
  const findings = cell ? findingsForCell(report, segment, action) : [];
  const sql = cell ? cellSql(report, segment, action) : null;

  return (
    <section className="screen" aria-labelledby="segments-title" data-regroup-source={regrouped ? (regroup.source ?? 'pending') : 'report'} data-cube-queries={workspace?.cube?.queriesRun ?? 0} aria-busy={regroupPending}>
      <h1 id="segments-title">Segment map</h1>
      <p className="lead">Segments down the side, actions across. Choose a cell to see what the checks found there and the SQL that selects its rows.</p>
      {workspace && columns.length > 1 && (
        <fieldset className="toolbar" aria-label="Group segments by">
          <legend className="muted">Group by</legend>
          {columns.map((c) => (
            <label key={c} className="check-label">
              <input type="checkbox" checked={groupBy.includes(c)} onChange={() => toggle(c)} data-testid={`group-by-${c}`} /> {c}
            </label>
          ))}
        </fieldset>
      )}
      {versions.length > 0 && (
        <div className="toolbar">
          <label className="check-label">
            Policy version{' '}
            <select value={version ?? ''} onChange={(e) => chooseVersion(e.target.value)} data-testid="segment-map-version">
              <option value="">all versions</option>
              {versions.map((v) => <option key={v} value={v}>{v}</option>)}
            </select>
          </label>
        </div>
      )}
      {regroup.error && regrouped && <p role="alert">The map could not be regrouped: {regroup.error}</p>}
      <div className="toolbar" role="group" aria-label="Map to show">
        {maps.map((m, i) => (
          <button key={`${m.check}-${m.series.name}`} type="button" className={`button small${i === which ? ' selected' : ''}`} aria-pressed={i === which} onClick={() => { setWhich(i); setCell(null); }}>
            {m.series.name}
          </button>
        ))}
        <button type="button" className="button small link" onClick={() => setAsTable(!asTable)}>{asTable ? 'Show as chart' : 'Show as table (keyboard)'}</button>
      </div>

      <div className="map-layout">
        <div className="map">
          {option && !asTable && series.values.length > MAP_WINDOW_ROWS && (
            <p className="help">{MAP_WINDOW_ROWS} of {countText(series.values.length)} segment rows at a time: scroll over the map, or drag the bar at its right, for the others.</p>
          )}
          {option && !asTable ? (
            <EChart option={option} label={`${series.name}: segments by actions`} height={Math.min(heightForSeries(series), windowedMapHeight(series.values.length))} onCellClick={onChartClick} />
          ) : (
            <div className="table-scroll">
              <table className="heat-table">
                <caption>{series.name}{series.unit ? ` (${series.unit})` : ''}</caption>
                <thead><tr><th scope="col">Segment</th>{series.x.map((x) => <th key={String(x)} scope="col">{x}</th>)}</tr></thead>
                <tbody>
                  {series.values.map((row, i) => (
                    <tr key={i}>
                      <th scope="row">{ys[i]}{series.row_notes?.[i] ? <strong> — {series.row_notes[i]}</strong> : null}</th>
                      {row.map((v, j) => (
                        <td key={j}>
                          <button type="button" className={`cell-button${cell?.row === i && cell.col === j ? ' selected' : ''}`} style={cellStyle(v, range)} onClick={() => setCell({ row: i, col: j })} aria-label={`${ys[i]}, ${series.x[j]}: ${cellText(v)}`}>
                            {cellText(v)}
                          </button>
                        </td>
                      ))}
                    </tr>
                  ))}
                </tbody>
              </table>
            </div>
          )}
        </div>
        <aside className="cell-detail card" aria-live="polite" aria-label="Selected cell">
          {cell ? (
            <>
              <h2>{rowLabel} · {action}</h2>
              <p>{series.name}: <strong data-testid="cell-value">{cellText(series.values[cell.row]?.[cell.col] ?? null)}</strong>{series.unit ? ` ${series.unit}` : ''}</p>
              {sql && <SqlBlock sql={sql} label="SQL that selects this cell's rows (name your log “log”)" />}
              <h3>Findings here ({findings.length})</h3>
              {findings.length === 0 ? <p className="muted">No check reported a finding for this cell.</p> : (
                findings.map((f, i) => <div key={i}><p className="muted"><code>{f.check}</code> {f.title}</p><FindingList findings={[f.finding]} /></div>)
              )}
              <p><a href="#cell-rows-title">The rows behind this cell</a> are listed under the map.</p>
            </>
          ) : <p className="muted">Click a cell of the map — or, from the keyboard, switch to the table view and press a cell — to see what the checks found there and the SQL that selects its rows.</p>}
        </aside>
      </div>
      {cell && <CellRows key={`${rowLabel}\u0000${action}\u0000${version ?? ''}`} report={report} workspace={workspace} segment={segment} version={version} action={action} findings={findings} title={`${rowLabel} · ${action}${version === null ? '' : ` (policy version ${version})`}`} />}
      <ReadinessTable report={report} />
    </section>
  );
}

/** The rows behind the chosen cell, or behind one of its findings, paged from the engine on demand. */
function CellRows({ report, workspace, segment: cellSegment, version, action, findings, title }: {
  report: Report; workspace: AuditWorkspace | undefined; segment: Readonly<Record<string, string>> | null; version: string | null; action: string; findings: readonly CellFinding[]; title: string;
}) {
  // A map kept to one policy version shows that version's rows only; the version column is read as the cube reads it.
  const versionColumn = report.roles.policy_version;
  const segment = cellSegment && version !== null && versionColumn ? { ...cellSegment, [versionColumn]: version } : cellSegment;
  const engine = useEngine();
  const source = engine.status.kind === 'done' ? engine.status.source : null;
  const [listed, setListed] = useState<number | null>(null);
  const withRows = source ? findings.flatMap((f, i) => (findingSelection(f.finding, source) ? [i] : [])) : [];
  const chosen = listed === null ? null : findings[listed];
  const selection = chosen && source ? findingSelection(chosen.finding, source) : cellSelection(report, workspace?.cells, segment, action);
  const roles = report.roles;
  const order = [roles.time, roles.decision_id].filter((c): c is string => !!c);

  let body;
  if (!source) body = <p className="muted">Rows are read from the open log: open it and run the audit to list them here.</p>;
  else if (!selection) body = <p className="muted">This cell&apos;s rows cannot be selected from the report alone (its segment label or a capped column&apos;s kept values are not known).</p>;
  else {
    const feed = rowFeed(engine, source, { roles, selection });
    body = <RowPager feed={feed} label={`Rows behind ${chosen ? `the finding of ${chosen.check}` : title}`} order={order.length ? `${order.join(', ')}; identical rows in any order` : 'a hash of each row (no time or decision id is mapped)'} />;
  }

  return (
    <section className="card cell-rows" aria-labelledby="cell-rows-title">
      <h2 id="cell-rows-title">Rows behind {title}</h2>
      {withRows.length > 0 && (
        <div className="toolbar" role="group" aria-label="Rows of">
          <button type="button" className={`button small${listed === null ? ' selected' : ''}`} aria-pressed={listed === null} onClick={() => setListed(null)}>This cell</button>
          {withRows.map((i, n) => {
            const f = findings[i] as CellFinding;
            const same = withRows.filter((j) => findings[j]?.check === f.check);
            return (
              <button key={i} type="button" className={`button small${listed === i ? ' selected' : ''}`} aria-pressed={listed === i} onClick={() => setListed(i)} title={f.finding.message}>
                Finding: <code>{f.check}</code>{same.length > 1 ? ` (${withRows.slice(0, n + 1).filter((j) => findings[j]?.check === f.check).length} of ${same.length})` : ''}
              </button>
            );
          })}
        </div>
      )}
      {body}
    </section>
  );
}
