import type { Metrics } from '../../app/core/model/report.ts';
import { isInstant, metricText } from '../format.ts';
import { Term } from './Term.tsx';

export function MetricsTable({ metrics, caption }: { metrics: Metrics; caption: string }) {
  const entries = Object.entries(metrics);
  if (entries.length === 0) return null;
  const times = entries.some(([, v]) => isInstant(v));
  return (
    <table className="metrics">
      <caption>{caption}{times ? ' (times in UTC)' : ''}</caption>
      <tbody>
        {entries.map(([k, v]) => <tr key={k}><th scope="row"><Term metric={k} /></th><td>{metricText(k, v)}</td></tr>)}
      </tbody>
    </table>
  );
}
