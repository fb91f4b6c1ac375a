import { useState } from 'react';

export function SqlBlock({ sql, label }: { sql: string; label: string }) {
  const [copied, setCopied] = useState(false);
  return (
    <figure className="sql">
      <figcaption>
        {label}
        <button type="button" className="button small" onClick={() => { void navigator.clipboard?.writeText(sql).then(() => setCopied(true)); }}>
          {copied ? 'Copied' : 'Copy SQL'}
        </button>
      </figcaption>
      <pre><code>{sql}</code></pre>
    </figure>
  );
}
