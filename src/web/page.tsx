// One way to define a page: the handler builds its content with a PageKit, which remembers every table
// it shows; the same URL with ?csv=<table id> then answers with that table as CSV instead of HTML.
import type { Context, Hono } from 'hono';
import type { Child } from 'hono/jsx';
import { Chart } from './components/chart.tsx';
import { Layout, type Section } from './components/layout.tsx';
import { DataTable, type TableData } from './components/table.tsx';
import { safeFileName, toCsv } from './csv.ts';
import { AnalysisError } from '../analysis/errors.ts';
import { Problem } from './components/bits.tsx';
import { ParamError } from './params.ts';

export interface PageResult {
  title: string;
  section: Section;
  body: Child;
  status?: 200 | 400 | 404 | 422;
}

export interface ChartInput {
  id: string;
  title: string;
  note?: Child;
  spec: object;
  table: TableData<any>;
  openUpTo?: number;
}

export class PageKit {
  readonly tables = new Map<string, { title: string; table: TableData<any> }>();
  charts = 0;
  constructor(private readonly url: URL) {}

  csvHref(id: string): string {
    const u = new URL(this.url);
    u.searchParams.set('csv', id);
    return `${u.pathname}${u.search}`;
  }

  private remember(id: string, title: string, table: TableData<any>) {
    if (this.tables.has(id)) throw new Error(`two tables on one page share the id ${id}`);
    this.tables.set(id, { title, table });
  }

  chart(input: ChartInput): Child {
    this.remember(input.id, input.title, input.table);
    this.charts++;
    return <Chart {...input} csvHref={this.csvHref(input.id)} fileStem={safeFileName(input.title, 'x').slice(0, -2)} />;
  }

  /** A table that is not under a chart, with its own CSV link. */
  table(id: string, title: string, table: TableData<any>): Child {
    this.remember(id, title, table);
    return (
      <div class="table-block">
        <DataTable table={table} />
        {table.rows.length ? (
          <p class="tools">
            <a class="button" href={this.csvHref(id)} download={safeFileName(title, 'csv')}>
              {title} as CSV
            </a>
          </p>
        ) : null}
      </div>
    );
  }
}

export type PageHandler = (c: Context<any>, kit: PageKit) => Promise<PageResult | Response>;

const SECURITY_HEADERS = {
  // vega compiles its expressions with Function(), hence 'unsafe-eval'; nothing loads from elsewhere.
  'content-security-policy':
    "default-src 'self'; script-src 'self' 'unsafe-eval'; style-src 'self' 'unsafe-inline'; img-src 'self' data: blob:; connect-src 'self'; form-action 'self'; frame-ancestors 'none'; base-uri 'self'",
  'x-content-type-options': 'nosniff',
  'referrer-policy': 'same-origin',
};

export async function renderPage(c: Context<any>, handler: PageHandler): Promise<Response> {
  const kit = new PageKit(new URL(c.req.url));
  let result: PageResult | Response;
  try {
    result = await handler(c, kit);
  } catch (error) {
    // Too little data or a request the analysis cannot answer: say so on a page, not as an error.
    if (!(error instanceof AnalysisError || error instanceof ParamError)) throw error;
    result = { title: 'Cannot show this', section: 'mills', status: 422, body: <Problem message={error.message} /> };
  }
  if (result instanceof Response) return result;
  const csvId = c.req.query('csv');
  if (csvId !== undefined) {
    const held = kit.tables.get(csvId);
    if (!held) return c.text(`This page has no table named ${csvId}.`, 404);
    const cols = held.table.columns.filter((col) => !col.htmlOnly).map((col) => ({ key: col.key, label: col.label }));
    return c.body(toCsv(cols, held.table.rows), 200, {
      'content-type': 'text/csv; charset=utf-8',
      'content-disposition': `attachment; filename="${safeFileName(held.title, 'csv')}"`,
      'x-content-type-options': 'nosniff',
    });
  }
  const html = (
    <Layout title={result.title} section={result.section} charts={kit.charts > 0}>
      {result.body}
    </Layout>
  );
  return c.html('<!doctype html>' + (await html.toString()), result.status ?? 200, SECURITY_HEADERS);
}

export function page(app: Hono<any>, path: string, handler: PageHandler): void {
  app.get(path, (c) => renderPage(c, handler));
}

export { SECURITY_HEADERS };
