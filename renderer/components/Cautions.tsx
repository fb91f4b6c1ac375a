import { CAUTIONS } from '../../app/core/model/report.ts';

/** README.md "Cautions": shown wherever results are shown. */
export function Cautions({ cautions = CAUTIONS }: { cautions?: readonly string[] }) {
  return (
    <aside className="cautions" aria-label="Cautions">
      <h2>Read before relying on this</h2>
      <ul>{(cautions.length > 0 ? cautions : CAUTIONS).map((c) => <li key={c}>{c}</li>)}</ul>
    </aside>
  );
}
