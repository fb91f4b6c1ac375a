import { useEffect, useLayoutEffect, useRef, useState, type ReactNode } from 'react';
import type { DrillCursor } from '../../app/core/scan/drill.ts';
import type { Cell, Table } from '../../app/core/table.ts';
import { errorMessage } from '../engine/backend.ts';
import type { RowFeed } from '../engine/row-feed.ts';
import { formatValue, loggedValueText } from '../format.ts';
import { countText } from '../../app/core/count-words.ts';

const ROW_PX = 28;
const HEADER_PX = 30;
const OVERSCAN = 8;
const VISIBLE_ROWS = 12;
/** Pages kept in memory; the farthest from the view go first. */
const KEEP_PAGES = 40;
/** Chromium stops laying out an element taller than about 3.3e7 px; past this the scroll bar is scaled. */
const MAX_SCROLL_PX = 8_000_000;
/** Result columns the drill-down adds for its order (app/core/scan/drill.ts), not part of the log. */
const INTERNAL = /^cw:/;

const INDEX_PX = 60;
/**
 * Advance of one character at the table's font size (0.82rem of 15px), in px, in a wide sans-serif (DejaVu Sans,
 * Linux's default, measured on the screenshots: 7.2 px cut ids and headers such as "shown_chance"); headers are bold.
 */
const CHAR_PX = 7.9;
const HEAD_CHAR_PX = 8.8;
/** Later pages may hold longer values than the first (ids grow a digit): room for two more characters. */
const SLACK_CHARS = 2;

/** Column widths from the header and the first page's values, so that most logs fit without scrolling sideways. */
function widthsOf(page: Table, columns: readonly { name: string; j: number; type: string }[]): number[] {
  return columns.map((col) => {
    let chars = 0;
    const values = page.columns[col.j] as readonly Cell[];
    for (const v of values) chars = Math.max(chars, textOf(v, col.type).length);
    return Math.round(Math.min(300, Math.max(48, (chars + SLACK_CHARS) * CHAR_PX, col.name.length * HEAD_CHAR_PX) + 18));
  });
}

/** A log value as the row table shows it: the value itself, with timestamps readable. */
function textOf(value: Cell | undefined, type: string): string {
  if (value === null || value === undefined) return 'null';
  if (typeof value === 'string' && !type.toUpperCase().startsWith('TIMESTAMP')) return value;
  // Data values are shown as logged (no rounding, no digit grouping: 0.0123456 and id 1234 stay as they are).
  if (typeof value === 'string' || typeof value === 'number' || typeof value === 'bigint') return loggedValueText(value);
  return formatValue(value);
}

function cellView(value: Cell | undefined, type: string): ReactNode {
  return value === null || value === undefined ? <span className="null">null</span> : textOf(value, type);
}

function titleOf(value: Cell | undefined): string | undefined {
  if (value === null || value === undefined) return undefined;
  return typeof value === 'string' ? value : typeof value === 'object' ? formatValue(value) : String(value);
}

interface Cache {
  readonly pages: Map<number, Table>;
  readonly cursors: Map<number, DrillCursor | null>;
  inFlight: number | null;
}

/**
 * A virtualised table of the rows behind a selection: a scroll box as tall as every row, of which only
 * the rows in view (and a few either side) are drawn. Pages are fetched on demand, one at a time, in the
 * order they come into view; a page scrolled past before its turn is never requested, and a response for
 * a selection no longer shown is dropped.
 */
export function RowPager({ feed, label, order, pageRows = feed.pageRows }: { feed: RowFeed; label: string; order?: string; pageRows?: number }) {
  const feedRef = useRef(feed);
  feedRef.current = feed;
  const cache = useRef<Cache>({ pages: new Map(), cursors: new Map(), inFlight: null });
  const box = useRef<HTMLDivElement>(null);
  const want = useRef<[number, number]>([0, VISIBLE_ROWS]);
  const sized = useRef<{ key: string; widths: number[] } | null>(null);
  const [total, setTotal] = useState<number | null>(null);
  const [problem, setProblem] = useState<string | null>(null);
  const [scrollTop, setScrollTop] = useState(0);
  const [viewPx, setViewPx] = useState(VISIBLE_ROWS * ROW_PX);
  const [, setVersion] = useState(0);

  const pump = () => {
    const c = cache.current;
    if (c.inFlight !== null) return;
    const [from, to] = want.current;
    let p = -1;
    for (let q = Math.floor(from / pageRows); q <= Math.floor(to / pageRows); q++) if (!c.pages.has(q)) { p = q; break; }
    if (p < 0) return;
    const offset = p * pageRows;
    const after = p > 0 ? (c.cursors.get(p - 1) ?? null) : null;
    const f = feedRef.current;
    c.inFlight = p;
    f.page({ offset, limit: pageRows, after }).then((table) => {
      if (cache.current !== c) return;
      c.pages.set(p, table);
      c.cursors.set(p, f.next(table, after, offset));
      const here = Math.floor(want.current[0] / pageRows);
      while (c.pages.size > KEEP_PAGES) {
        const far = [...c.pages.keys()].sort((a, b) => Math.abs(b - here) - Math.abs(a - here))[0] as number;
        c.pages.delete(far);
      }
      c.inFlight = null;
      setVersion((v) => v + 1);
      pump();
    }, (error: unknown) => {
      if (cache.current !== c) return;
      c.inFlight = null;
      setProblem(errorMessage(error));
    });
  };

  useEffect(() => {
    cache.current = { pages: new Map(), cursors: new Map(), inFlight: null };
    const c = cache.current;
    setTotal(null);
    setProblem(null);
    setScrollTop(0);
    if (box.current) box.current.scrollTop = 0;
    want.current = [0, VISIBLE_ROWS];
    feedRef.current.count().then((n) => { if (cache.current === c) setTotal(n); }, (error: unknown) => { if (cache.current === c) setProblem(errorMessage(error)); });
    pump();
    // A new selection is a new key; a new feed object for the same selection changes nothing.
  }, [feed.key]);

  useLayoutEffect(() => {
    const el = box.current;
    if (!el) return;
    const measure = () => setViewPx(Math.max(ROW_PX, el.clientHeight - HEADER_PX));
    measure();
    const observer = new ResizeObserver(measure);
    observer.observe(el);
    return () => observer.disconnect();
  }, []);

  const c = cache.current;
  const first = c.pages.get(0) ?? [...c.pages.values()][0];
  const columns = first ? first.names.map((name, j) => ({ name, j, type: first.types[j] ?? '' })).filter((col) => !INTERNAL.test(col.name)) : [];
  const rows = total ?? first?.rowCount ?? 0;
  const fullPx = rows * ROW_PX;
  const contentPx = Math.min(fullPx, MAX_SCROLL_PX);
  const scrollable = Math.max(0, contentPx - viewPx);
  const virtualTop = scrollable > 0 ? Math.min(scrollTop, scrollable) * ((fullPx - viewPx) / scrollable) : 0;
  const from = Math.max(0, Math.floor(virtualTop / ROW_PX) - OVERSCAN);
  const to = Math.min(rows - 1, Math.ceil((virtualTop + viewPx) / ROW_PX) + OVERSCAN);
  want.current = [from, Math.max(from, total === null ? from + VISIBLE_ROWS : to)];
  useEffect(() => { pump(); });

  if (first && sized.current?.key !== feed.key) sized.current = { key: feed.key, widths: widthsOf(first, columns) };
  const widths = sized.current?.key === feed.key ? sized.current.widths : [];
  const rowWidth = INDEX_PX + widths.reduce((s, w) => s + w, 0);
  const drawn: ReactNode[] = [];
  for (let i = from; i <= to; i++) {
    const page = c.pages.get(Math.floor(i / pageRows));
    const k = i % pageRows;
    const top = i * ROW_PX - virtualTop + Math.min(scrollTop, scrollable);
    const loaded = page !== undefined && k < page.rowCount;
    drawn.push(
      <div key={i} role="row" aria-rowindex={i + 2} className={`pager-row${i % 2 ? ' odd' : ''}${loaded ? '' : ' loading'}`} style={{ top, height: ROW_PX, width: rowWidth }} data-row={i} aria-busy={loaded ? undefined : true}>
        <div role="rowheader" className="pager-cell pager-index" style={{ width: INDEX_PX }}>{countText(i + 1)}</div>
        {loaded
          ? columns.map((col, n) => {
            const v = (page.columns[col.j] as readonly Cell[])[k];
            return <div key={col.name} role="cell" className="pager-cell" style={{ width: widths[n] }} title={titleOf(v)} data-column={col.name}>{cellView(v, col.type)}</div>;
          })
          : <div role="cell" className="pager-cell muted" style={{ width: rowWidth - INDEX_PX }}>loading…</div>}
      </div>,
    );
  }

  return (
    <div className="row-pager" data-testid="row-pager">
      <p className="pager-status" aria-live="polite">
        {total === null ? <span className="muted">Counting rows…</span> : <strong data-testid="row-count" data-rows={total}>{formatValue(total)} {total === 1 ? 'row' : 'rows'}</strong>}
        {order && <span className="muted"> · ordered by {order}</span>}
      </p>
      {problem && <p className="problems" role="alert">The rows could not be read: {problem}</p>}
      <div
        ref={box}
        className="pager-box"
        role="table"
        aria-label={label}
        aria-rowcount={total === null ? -1 : total + 1}
        aria-colcount={columns.length + 1}
        tabIndex={0}
        style={{ height: VISIBLE_ROWS * ROW_PX + HEADER_PX }}
        onScroll={(e) => setScrollTop(e.currentTarget.scrollTop)}
      >
        <div role="row" aria-rowindex={1} className="pager-head" style={{ height: HEADER_PX, width: rowWidth }}>
          <div role="columnheader" className="pager-cell pager-index" style={{ width: INDEX_PX }}>#</div>
          {columns.map((col, n) => <div key={col.name} role="columnheader" className="pager-cell" style={{ width: widths[n] }} title={`${col.name} (${col.type})`}>{col.name}</div>)}
        </div>
        <div className="pager-body" style={{ height: contentPx, width: rowWidth }}>{drawn}</div>
        {total === 0 && <p className="muted pager-empty">No rows.</p>}
      </div>
    </div>
  );
}
