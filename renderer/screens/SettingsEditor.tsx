import { useState } from 'react';
import { resolveSettings, SETTINGS, type SettingSpec } from '../../app/core/settings.ts';
import { downloadText } from '../export/report-file.ts';

type Values = Readonly<Record<string, number | string | boolean>>;

/**
 * A settings file as the command's --settings FILE reads it (one JSON object of setting: value pairs),
 * checked by the core; the error names the file and the setting.
 */
export function parseSettingsFile(name: string, text: string): Values {
  let parsed: unknown;
  try {
    parsed = JSON.parse(text);
  } catch (error) {
    throw new Error(`${name} is not valid JSON: ${(error as Error).message}`);
  }
  if (parsed === null || typeof parsed !== 'object' || Array.isArray(parsed)) throw new Error(`${name} must hold one object of setting: value pairs.`);
  const out: Record<string, number | string | boolean> = {};
  for (const [key, value] of Object.entries(parsed as Record<string, unknown>)) {
    if (!(key in SETTINGS)) throw new Error(`${name}: there is no setting "${key}".`);
    if (typeof value !== 'number' && typeof value !== 'string' && typeof value !== 'boolean') throw new Error(`${name}: "${key}" must be a number, text or true/false.`);
    out[key] = value;
  }
  const problem = settingsProblem(out);
  if (problem) throw new Error(`${name}: ${problem}`);
  return out;
}

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
  const [fileError, setFileError] = useState<string | null>(null);
  const load = async (file: File | undefined) => {
    setFileError(null);
    if (!file) return;
    try {
      onChange(parseSettingsFile(file.name, await file.text()));
    } catch (error) {
      setFileError(error instanceof Error ? error.message : String(error));
    }
  };

  return (
    <details className="card settings">
      <summary>
        <h2>Thresholds</h2>
        <span className="muted">{entries.length} settings, {changed === 0 ? 'all at their defaults' : `${changed} changed from the default`} — open to see or change them</span>
      </summary>
      <div className="inline-form settings-files">
        <button type="button" className="button" onClick={() => downloadText(`${JSON.stringify(settings, null, 2)}\n`, 'counterweight-settings.json')}>Save these settings…</button>
        <label className="button" htmlFor="settings-file">Load settings…</label>
        <input id="settings-file" type="file" accept=".json" className="visually-hidden" onChange={(e) => { void load(e.target.files?.[0]); e.target.value = ''; }} />
        <span className="help">a JSON file of changed settings, the same file the command reads with <code>--settings FILE</code></span>
      </div>
      {fileError && <p className="problems" role="alert">{fileError}</p>}
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
