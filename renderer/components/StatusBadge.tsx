import { SHOWN_STATUS } from '../../app/charts/labels.ts';
import { STATUS_STYLE, type StatusKey } from '../palette.ts';

/** Status as icon + word + colour, so it reads without colour vision. */
export function StatusBadge({ status, label }: { status: StatusKey; label?: string }) {
  const style = STATUS_STYLE[status];
  return (
    <span className={`badge badge-${status}`} style={{ borderColor: style.colour }} title={status in SHOWN_STATUS ? SHOWN_STATUS[status as keyof typeof SHOWN_STATUS].explain : undefined}>
      <span className="badge-icon" aria-hidden="true" style={{ background: style.colour }}>{style.icon}</span>
      <span>{label ?? style.word}</span>
    </span>
  );
}
