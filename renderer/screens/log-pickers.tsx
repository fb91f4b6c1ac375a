import { useState } from 'react';
import { FileDropZone } from '../components/FileDropZone.tsx';
import { ACCEPTED_EXTENSIONS } from '../engine/source-files.ts';

/** Web mode: a hidden file input behind a button, and a drop zone; the files are read lazily by the engine. */
const WEB_HINT = 'Parquet, or CSV or TSV with a header row; several parts of one log are read together as one table.';

export function FilePicker({ busy, onFiles, hint = WEB_HINT }: { busy: boolean; onFiles: (files: File[]) => void; hint?: string }) {
  return (
    <FileDropZone
      name="log"
      title="Drop log files here"
      hint={hint}
      inputId="log-files"
      inputLabel="Log files"
      accept={ACCEPTED_EXTENSIONS.join(',')}
      button="Choose files…"
      busy={busy}
      onFiles={onFiles}
    />
  );
}

/** Desktop: the main process shows the dialog and grants the engine host the chosen paths. */
export function DesktopPicker({ busy, onPaths }: { busy: boolean; onPaths: (paths: string[]) => void }) {
  const choose = async () => {
    const paths = await window.counterweight?.chooseLog();
    if (paths && paths.length > 0) onPaths(paths);
  };
  return (
    <div className="dropzone">
      <p className="dropzone-title">Open a log from this computer</p>
      <p className="muted">Parquet, CSV, TSV or NDJSON; choose several files to read the parts of one log together.</p>
      <button type="button" className="button primary" disabled={busy} onClick={() => { void choose(); }}>Choose files…</button>
    </div>
  );
}

/** Hosted mode: the local engine reads paths on its own machine; a browser cannot hand it a File. */
export function PathForm({ busy, onPaths }: { busy: boolean; onPaths: (paths: string[]) => void }) {
  const [text, setText] = useState('');
  const paths = text.split('\n').map((p) => p.trim()).filter((p) => p !== '');
  return (
    <form className="dropzone path-form" onSubmit={(e) => { e.preventDefault(); if (paths.length > 0) onPaths(paths); }}>
      <label className="dropzone-title" htmlFor="log-paths">Or type the paths of the log files</label>
      <p className="muted">One per line, as the local engine sees them (absolute, or relative to where it was started).</p>
      <textarea id="log-paths" rows={3} cols={60} value={text} onChange={(e) => setText(e.target.value)} placeholder="/data/decisions/part-0.parquet" />
      <button type="submit" className="button primary" disabled={busy || paths.length === 0}>Open</button>
    </form>
  );
}
