/**
 * A one-line progress display on stderr: the step in words and, while the audit runs, stage k of n, the
 * share of the log the running pass has read, the share of the audit done and the time left
 * (app/core/progress.ts), then the elapsed time.
 */
import { ProgressTracker, progressWords, type AuditProgressEvent } from '../core/progress.ts';
import type { OutStream } from './io.ts';

const FRAMES = ['⠋', '⠙', '⠹', '⠸', '⠼', '⠴', '⠦', '⠧', '⠇', '⠏'];

export class ProgressLine {
  private stageName = '';
  private readonly started: number;
  private timer: ReturnType<typeof setInterval> | undefined;
  private frame = 0;
  private tracker: ProgressTracker | undefined;

  constructor(
    private readonly stream: OutStream,
    private readonly enabled: boolean,
    /** The engine's query progress, 0…100, or null when it cannot tell. */
    private readonly percentage?: () => number | null | undefined,
    private readonly now: () => number = Date.now,
  ) {
    this.started = now();
  }

  /** A step before or after the audit proper (opening the log, fingerprinting). */
  stage(name: string): void {
    this.stageName = name;
    this.start();
  }

  /** What the audit says (a stage or pass starts, a stage ends). */
  audit(event: AuditProgressEvent, name: string): void {
    this.tracker ??= new ProgressTracker(this.now());
    this.tracker.event(event, this.now());
    if (!event.done) this.stageName = name;
    this.start();
  }

  private start(): void {
    if (!this.enabled) return;
    this.timer ??= setInterval(() => this.draw(), 120);
    this.timer.unref?.();
    this.draw();
  }

  /** The text drawn now (without the spinner). */
  line(): string {
    const seconds = ((this.now() - this.started) / 1000).toFixed(1);
    let detail = '';
    if (this.tracker) {
      let pct: number | null | undefined = null;
      try {
        pct = this.percentage?.();
      } catch {
        // progress is best-effort; a failing probe never stops the audit
      }
      detail = ` · ${progressWords(this.tracker.sample(pct, this.now()))}`;
    }
    return `${this.stageName}${detail} · ${seconds} s`;
  }

  private draw(): void {
    this.frame = (this.frame + 1) % FRAMES.length;
    this.stream.write(`\r\x1b[K${FRAMES[this.frame]} ${this.line()}`);
  }

  stop(): void {
    if (this.timer) clearInterval(this.timer);
    this.timer = undefined;
    if (this.enabled) this.stream.write('\r\x1b[K');
  }
}
