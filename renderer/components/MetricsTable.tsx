import type { Metrics } from '../../app/core/model/report.ts';
import { formatValue } from '../format.ts';
import { Term } from './Term.tsx';

export function MetricsTable({ metrics, caption }: { metrics: Metrics; caption: string }) {
  const entries = Object.entries(metrics);
  if (entries.length === 0) return null;
  return (
    <table className="metrics">
      <caption>{caption}</caption>
      <tbody>
        {entries.map(([k, v]) => <tr key={k}><th scope="row"><Term metric={k} /></th><td>{formatValue(v)}</td></tr>)}
      </tbody>
    </table>
  );
}
