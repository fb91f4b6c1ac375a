import { resolveSettings, SETTINGS, type SettingSpec } from '../../app/core/settings.ts';

type Values = Readonly<Record<string, number | string | boolean>>;

/** The core's own validation, in its words; null when the overrides are acceptable. */
export function settingsProblem(values: Values): string | null {
  try {
    resolveSettings(values);
    return null;
  } catch (error) {
    return error instanceof Error ? error.message : String(error);
  }
}

function groupOf(key: string): string {
  return key.split('.').slice(0, -1).join('.') || key;
}

export function SettingsEditor({ settings, onChange }: { settings: Values; onChange: (values: Values) => void }) {
  const entries = Object.entries(SETTINGS as Record<string, SettingSpec>);
  const set = (key: string, raw: string, spec: SettingSpec) => {
    const next: Record<string, number | string | boolean> = { ...settings };
    if (raw === String(spec.default)) delete next[key];
    else next[key] = typeof spec.default === 'number' && raw.trim() !== '' && Number.isFinite(Number(raw)) ? Number(raw) : raw;
    onChange(next);
  };
  const changed = Object.keys(settings).length;

  return (
    <details className="card settings">
      <summary>
        <h2>Thresholds</h2>
        <span className="muted">{entries.length} settings, {changed === 0 ? 'all at their defaults' : `${changed} changed from the default`} — open to see or change them</span>
      </summary>
      <table>
        <thead><tr><th scope="col">Setting</th><th scope="col">Value</th><th scope="col">Default</th><th scope="col">Where the default comes from</th></tr></thead>
        <tbody>
          {entries.map(([key, spec], i) => {
            const id = `setting-${key}`;
            const value = settings[key];
            const newGroup = i === 0 || groupOf(entries[i - 1]?.[0] ?? '') !== groupOf(key);
            return (
              <tr key={key} className={newGroup ? 'group-start' : undefined}>
                <th scope="row"><label htmlFor={id}><code>{key}</code></label><div className="help">{spec.description}</div></th>
                <td>
                  <input
                    id={id}
                    className={value === undefined ? undefined : 'changed'}
                    inputMode={typeof spec.default === 'number' ? 'decimal' : 'text'}
                    value={value === undefined ? String(spec.default) : String(value)}
                    onChange={(e) => set(key, e.target.value, spec)}
                  />
                  {value !== undefined && <span className="muted"> changed</span>}
                </td>
                <td><code>{String(spec.default)}</code></td>
                <td className="source">{spec.source}</td>
              </tr>
            );
          })}
        </tbody>
      </table>
    </details>
  );
}
