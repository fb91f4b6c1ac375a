/** A one-line progress display on stderr: stage name, elapsed time, rows scanned when the engine knows. */
import type { OutStream } from './io.ts';

export interface RowProgress {
  rowsProcessed: number;
  totalRows: number;
}

const FRAMES = ['⠋', '⠙', '⠹', '⠸', '⠼', '⠴', '⠦', '⠧', '⠇', '⠏'];

export class ProgressLine {
  private stageName = '';
  private readonly started = Date.now();
  private timer: ReturnType<typeof setInterval> | undefined;
  private frame = 0;
  private lastRows: RowProgress | undefined;

  constructor(
    private readonly stream: OutStream,
    private readonly enabled: boolean,
    private readonly rows?: () => RowProgress | undefined,
  ) {}

  stage(name: string): void {
    this.stageName = name;
    if (!this.enabled) return;
    this.timer ??= setInterval(() => this.draw(), 120);
    this.timer.unref?.();
    this.draw();
  }

  private draw(): void {
    const seconds = ((Date.now() - this.started) / 1000).toFixed(1);
    let rows = '';
    try {
      const r = this.rows?.();
      if (r && r.rowsProcessed > 0) this.lastRows = r;
    } catch {
      // progress is best-effort; a failing probe never stops the audit
    }
    if (this.lastRows) {
      const { rowsProcessed, totalRows } = this.lastRows;
      rows = totalRows > 0 ? ` · ${rowsProcessed.toLocaleString('en-US')} of ${totalRows.toLocaleString('en-US')} rows scanned` : ` · ${rowsProcessed.toLocaleString('en-US')} rows scanned`;
    }
    this.frame = (this.frame + 1) % FRAMES.length;
    this.stream.write(`\r\x1b[K${FRAMES[this.frame]} ${this.stageName}${rows} · ${seconds} s`);
  }

  stop(): void {
    if (this.timer) clearInterval(this.timer);
    this.timer = undefined;
    if (this.enabled) this.stream.write('\r\x1b[K');
  }
}
