// A data table: the same rows feed the HTML table and the CSV download, so what a person reads and
// what a spreadsheet receives are one set of values.
import type { Child } from 'hono/jsx';

export interface Column<R = Record<string, unknown>> {
  key: string;
  label: string;
  /** Right-aligned numbers. */
  numeric?: boolean;
  /** Decimal places for numbers in the HTML table (the CSV keeps full precision). */
  digits?: number;
  /** Custom HTML cell (links, tags); the CSV still gets the raw value at `key`. */
  cell?: (row: R) => Child;
  /** Long text that may wrap. */
  wrap?: boolean;
  /** Only in the CSV (e.g. notes shown inside another cell). */
  csvOnly?: boolean;
  /** Only in the HTML table (e.g. action forms). */
  htmlOnly?: boolean;
}

export interface TableData<R = Record<string, unknown>> {
  columns: Column<R>[];
  rows: R[];
}

export function formatValue(value: unknown, digits?: number): string {
  if (value === null || value === undefined || value === '') return '–';
  if (typeof value === 'number') {
    if (!Number.isFinite(value)) return '–';
    return digits === undefined ? String(value) : value.toFixed(digits);
  }
  if (typeof value === 'boolean') return value ? 'yes' : 'no';
  return String(value);
}

/**
 * Readable at any width without hidden columns: headers and text cells wrap; on a narrow screen a
 * table of more than two columns stacks each row as label–value lines (site.css, "stacked tables"),
 * so nothing sits off to the side.
 */
export function DataTable<R extends Record<string, unknown>>(props: { table: TableData<R>; caption?: string; id?: string }) {
  const table = { ...props.table, columns: props.table.columns.filter((c) => !c.csvOnly) };
  if (table.rows.length === 0) return <p class="empty">No rows.</p>;
  return (
    <div class="table-wrap">
      <table id={props.id} class={table.columns.length > 2 ? 'stack' : undefined}>
        {props.caption ? <caption class="sr">{props.caption}</caption> : null}
        <thead>
          <tr>
            {table.columns.map((c) => (
              <th scope="col" class={c.numeric ? 'num' : undefined}>
                {c.label}
              </th>
            ))}
          </tr>
        </thead>
        <tbody>
          {table.rows.map((r) => (
            <tr>
              {table.columns.map((c) => (
                <td class={c.numeric ? 'num' : c.wrap ? 'wrap' : undefined} data-label={c.label}>{c.cell ? c.cell(r) : formatValue(r[c.key], c.digits)}</td>
              ))}
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
