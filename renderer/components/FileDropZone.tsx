import { useRef, useState, type DragEvent, type ReactNode } from 'react';

interface Props {
  /** the test ids are `<name>-drop-zone` and `<name>-file-input` */
  readonly name: string;
  readonly title: string;
  readonly hint: ReactNode;
  readonly inputId?: string;
  readonly inputLabel: string;
  readonly accept: string;
  readonly button: string;
  readonly busy?: boolean;
  /** picked or dropped files; never called with none */
  readonly onFiles: (files: File[]) => void;
  /** what the button does instead of opening the file input (the desktop app's own dialog) */
  readonly onChoose?: (openInput: () => void) => void;
}

/** A hidden file input behind a button, and a drop zone around both. */
export function FileDropZone({ name, title, hint, inputId, inputLabel, accept, button, busy, onFiles, onChoose }: Props) {
  const input = useRef<HTMLInputElement>(null);
  const [dragging, setDragging] = useState(false);
  const files = (list: File[]) => { if (list.length > 0) onFiles(list); };
  const openInput = () => input.current?.click();
  const onDrop = (event: DragEvent) => {
    event.preventDefault();
    setDragging(false);
    files([...event.dataTransfer.files]);
  };
  return (
    <div
      className={`dropzone${dragging ? ' dropzone-active' : ''}`}
      data-testid={`${name}-drop-zone`}
      onDragOver={(e) => { e.preventDefault(); setDragging(true); }}
      onDragLeave={() => setDragging(false)}
      onDrop={onDrop}
    >
      <p className="dropzone-title">{title}</p>
      <p className="muted">{hint}</p>
      <input
        ref={input}
        id={inputId}
        data-testid={`${name}-file-input`}
        aria-label={inputLabel}
        type="file"
        multiple
        accept={accept}
        className="visually-hidden"
        tabIndex={-1}
        onChange={(e) => { const list = [...(e.target.files ?? [])]; e.target.value = ''; files(list); }}
      />
      <button type="button" className="button primary" disabled={busy} onClick={() => (onChoose ? onChoose(openInput) : openInput())}>{button}</button>
    </div>
  );
}
