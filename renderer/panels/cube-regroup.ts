import { useEffect, useMemo, useState } from 'react';
import { filterCells, type CubeFilter } from '../../app/core/cube/filter.ts';
import type { Series } from '../../app/core/model/report.ts';
import { segmentMap } from '../../app/core/segment-map.ts';
import { errorMessage } from '../engine/backend.ts';
import type { AuditWorkspace } from '../engine/status.ts';

/** Where a regrouped map came from: SQL over the `cube` table in the page's worker, or the cells in the page. */
export type RegroupSource = 'cube-sql' | 'page';

export interface Regroup {
  /** The grouping and filter the series answer (JSON of both). */
  readonly key: string;
  readonly series: readonly Series[] | null;
  readonly source: RegroupSource | null;
  readonly error: string | null;
}

const NONE: Regroup = { key: '', series: null, source: null, error: null };

export function regroupKey(groupBy: readonly string[], filter: CubeFilter): string {
  return JSON.stringify([groupBy, filter]);
}

/** Logged policy versions in the cube, when there are several to choose between. */
export function cubeVersions(workspace: AuditWorkspace | undefined): string[] {
  if (!workspace) return [];
  const versions = [...new Set(workspace.cells.map((c) => c.version))].filter((v) => v !== '').sort();
  return versions.length > 1 ? versions : [];
}

/**
 * The segment map regrouped by `groupBy` over the cells `filter` keeps. It is SQL over the cube in the
 * page's DuckDB-Wasm worker; only a workspace whose worker could not take the cube regroups its cells here.
 */
export function useCubeRegroup(workspace: AuditWorkspace | undefined, columns: readonly string[], groupBy: readonly string[], filter: CubeFilter, active: boolean): Regroup {
  const key = regroupKey(groupBy, filter);
  const [state, setState] = useState<Regroup>(NONE);
  // Keyed on the value, so a new but equal groupBy or filter array does not run the query again.
  const wanted = useMemo(() => {
    const [g, f] = JSON.parse(key) as [string[], CubeFilter];
    return { groupBy: g, filter: f };
  }, [key]);
  useEffect(() => {
    if (!active || !workspace) return;
    const { cube } = workspace;
    if (!cube) {
      try {
        setState({ key, series: segmentMap(filterCells(workspace.cells, wanted.filter), columns, wanted.groupBy), source: 'page', error: null });
      } catch (error) {
        setState({ key, series: null, source: null, error: errorMessage(error) });
      }
      return;
    }
    let live = true;
    cube.segmentMap(wanted.groupBy, wanted.filter).then(
      (series) => { if (live) setState({ key, series, source: 'cube-sql', error: null }); },
      (error: unknown) => { if (live) setState({ key, series: null, source: null, error: errorMessage(error) }); },
    );
    return () => { live = false; };
  }, [active, workspace, columns, key, wanted]);
  return state;
}
