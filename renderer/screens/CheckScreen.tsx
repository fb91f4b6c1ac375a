import type { CheckResult, Report } from '../../app/core/model/report.ts';
import { settingValueText } from '../../app/charts/labels.ts';
import { FindingList } from '../components/FindingList.tsx';
import { MetricsTable } from '../components/MetricsTable.tsx';
import { SeriesView } from '../components/SeriesView.tsx';
import { StatusBadge } from '../components/StatusBadge.tsx';
import { shownStatus } from '../../app/charts/labels.ts';
import { REMEDIES_FOR } from '../../app/core/checks/registry.ts';
import type { RemedyKind } from '../../app/core/remedies/links.ts';
import { RemedyLinks } from '../components/RemedyLinks.tsx';
import { withTimesInWords } from '../format.ts';

export function CheckScreen({ check, settings, onBack, onRemedies }: { check: CheckResult; settings: Report['settings']; onBack: () => void; onRemedies?: (kind: RemedyKind) => void }) {
  return (
    <section aria-labelledby="check-title" className="screen">
      <button type="button" className="button link" onClick={onBack}>← Overview</button>
      <h1 id="check-title">{check.title} <StatusBadge status={shownStatus(check)} /></h1>
      <p className="lead"><code>{check.id}</code> — {withTimesInWords(check.summary)}</p>
      {onRemedies && (check.status === 'warn' || check.status === 'fail' || check.status === 'error') && <p><RemedyLinks kinds={REMEDIES_FOR[check.id]} onRemedies={onRemedies} about={check.title} /></p>}
      <div className="detail-grid">
        <MetricsTable metrics={check.metrics} caption="Numbers behind the status" />
        {check.settings_used.length > 0 && (
          <div className="card"><h2>Settings used</h2><ul className="plain settings-used">{check.settings_used.map((s) => {
            const setting = settings[s];
            return <li key={s}><code>{s}</code>{setting ? <> = <strong>{settingValueText(s, setting.value)}</strong>{setting.value === setting.default ? '' : <span className="muted"> (default {settingValueText(s, setting.default)})</span>}</> : null}</li>;
          })}</ul></div>
        )}
      </div>
      {(check.series ?? []).map((s) => <SeriesView key={s.name} series={s} />)}
      <h2>Findings ({check.findings.length})</h2>
      <FindingList findings={check.findings} />
    </section>
  );
}
