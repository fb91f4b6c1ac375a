import { useId } from 'react';
import { metricWords } from '../../app/charts/labels.ts';

/**
 * A metric's human label with its one-line explanation and source at hand: shown on hover and on keyboard
 * focus (the label is focusable and described by the tip, WAI-ARIA tooltip pattern).
 */
export function Term({ metric, label }: { metric: string; label?: string }) {
  const id = useId();
  const words = metricWords(metric);
  return (
    <span className="term" tabIndex={0} aria-describedby={id}>
      {label ?? words.label}
      <span role="tooltip" id={id} className="term-tip">
        {words.explain}{words.source ? ` Source: ${words.source}.` : ''} <code>{metric}</code>
      </span>
    </span>
  );
}
