// A chart block: the Vega-Lite specification (drawn in the browser by charts.js), buttons to save the
// drawing as SVG or PNG, a link to its data as CSV, and the data table under it.
import type { Child } from 'hono/jsx';
import { DataTable, type TableData } from './table.tsx';

/** JSON that is safe inside a <script> element: no "</script>", no HTML comment openers, no line separators. */
export function scriptJson(value: unknown): string {
  return JSON.stringify(value)
    .replace(/</g, '\\u003c')
    .replace(/>/g, '\\u003e')
    .replace(/&/g, '\\u0026')
    .replace(/\u2028/g, '\\u2028')
    .replace(/\u2029/g, '\\u2029');
}

export interface ChartProps {
  id: string;
  title: string;
  note?: Child;
  spec: object;
  table: TableData<any>;
  csvHref: string;
  fileStem: string;
  /** Rows up to which the table starts open. */
  openUpTo?: number;
}

export function Chart(props: ChartProps) {
  const n = props.table.rows.length;
  return (
    <figure class="chart" data-chart="" id={`chart-${props.id}`} data-name={props.fileStem}>
      <figcaption>{props.title}</figcaption>
      {props.note ? <p class="note">{props.note}</p> : null}
      <div class="vis" role="img" aria-label={props.title}></div>
      <script type="application/json" dangerouslySetInnerHTML={{ __html: scriptJson(props.spec) }}></script>
      <div class="tools">
        <button type="button" data-export="svg" disabled>
          Save chart as SVG
        </button>
        <button type="button" data-export="png" disabled>
          Save chart as PNG
        </button>
        <a class="button" href={props.csvHref} download={`${props.fileStem}.csv`}>
          Data as CSV
        </a>
      </div>
      <details open={n <= (props.openUpTo ?? 25)}>
        <summary>
          Data table ({n} {n === 1 ? 'row' : 'rows'})
        </summary>
        <DataTable table={props.table} />
      </details>
    </figure>
  );
}
