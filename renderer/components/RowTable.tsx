import type { ReactNode } from 'react';

/** A column of a `RowTable`: its header and its cell for one row (right-aligned as a number unless `text`). */
export interface RowColumn<R> {
  readonly head: ReactNode;
  readonly cell: (row: R) => ReactNode;
  readonly text?: boolean;
}

interface Props<R> {
  readonly testId: string;
  readonly rows: readonly R[];
  /** the header over the row headers, and each row's header cell */
  readonly head: ReactNode;
  readonly rowHead: (row: R) => ReactNode;
  readonly columns: readonly RowColumn<R>[];
  readonly rowKey?: (row: R, index: number) => string | number;
  /** data attributes of a row (what the browser tests read) */
  readonly rowData?: (row: R) => Record<`data-${string}`, string>;
}

/** A scrolling table with one header cell per row and a cell per column. */
export function RowTable<R>({ testId, rows, head, rowHead, columns, rowKey = (_, i) => i, rowData }: Props<R>) {
  return (
    <div className="table-scroll">
      <table className="history-table" data-testid={testId}>
        <thead>
          <tr><th scope="col">{head}</th>{columns.map((c, j) => <th key={j} scope="col">{c.head}</th>)}</tr>
        </thead>
        <tbody>
          {rows.map((r, i) => (
            <tr key={rowKey(r, i)} {...rowData?.(r)}>
              <th scope="row">{rowHead(r)}</th>
              {columns.map((c, j) => <td key={j} className={c.text ? undefined : 'num'}>{c.cell(r)}</td>)}
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
