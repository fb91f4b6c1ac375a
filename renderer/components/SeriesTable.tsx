import type { Series } from '../../app/core/model/report.ts';
import { formatValue, isInstant, timeText } from '../format.ts';

/** A series as a plain table: the accessible twin of its chart. */
export function SeriesTable({ series }: { series: Series }) {
  const rows = series.y ?? series.labels ?? series.values.map((_, i) => String(i + 1));
  return (
    <div className="table-scroll">
      <table className="series-table">
        <caption>{series.name}{series.unit ? ` (${series.unit})` : ''}</caption>
        <thead><tr><th scope="col" />{series.x.map((x) => <th key={String(x)} scope="col">{isInstant(x) ? timeText(x) : x}</th>)}</tr></thead>
        <tbody>
          {series.values.map((row, i) => (
            <tr key={i}><th scope="row">{rows[i] ?? ''}</th>{row.map((v, j) => <td key={j}>{formatValue(v)}</td>)}</tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
