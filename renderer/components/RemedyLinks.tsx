import { REMEDY_TITLES, type RemedyKind } from '../../app/core/remedies/links.ts';

/** The remedies the report links to a warning or failing reason or check, each opening its section of the Remedies screen. */
export function RemedyLinks({ kinds, onRemedies, about }: { kinds: readonly RemedyKind[] | undefined; onRemedies: (kind: RemedyKind) => void; about: string }) {
  if (!kinds || kinds.length === 0) return null;
  return (
    <span className="remedy-links">
      <span className="muted">What would make this usable: </span>
      {kinds.map((k, i) => (
        <span key={k}>
          {i > 0 ? ' · ' : ''}
          <button type="button" className="button link" aria-label={`${REMEDY_TITLES[k]} (for ${about})`} onClick={() => onRemedies(k)}>{REMEDY_TITLES[k]}</button>
        </span>
      ))}
    </span>
  );
}
