// Alerts: the list with filters, and acknowledge / resolve with a note. The forms post to this page's own
// routes (no script needed), which call the same functions as the JSON API, then return to the list.
import type { Context, Hono } from 'hono';
import { alertRuleName } from '../../alerts/ruleNames.ts';
import type { Db } from '../../db/connection.ts';
import { ALERT_STATUSES, AlertNotFoundError, AlertStateError, acknowledgeAlert, listAlerts, resolveAlert, type AlertStatus, type AlertView } from '../../db/alerts.ts';
import { listGrades, listMills } from '../../db/referenceData.ts';
import { Caution } from '../components/caution.tsx';
import { Select, Tag } from '../components/bits.tsx';
import { page } from '../page.tsx';
import { mmLabel, optionalText, query } from '../params.ts';
import { alertCountSpec } from '../specs/alerts.ts';

const SEVERITY_KIND = { critical: 'bad', warning: 'odd', info: 'none' } as const;

/** Where to go back after a form: only a query string of this page (never another site). */
export function backTo(raw: string | undefined, message: string): string {
  const params = new URLSearchParams(raw && raw.startsWith('?') ? raw.slice(1) : '');
  params.delete('done');
  params.set('done', message);
  return `/alerts?${params.toString()}`;
}

function AlertActions(props: { alert: AlertView; back: string }) {
  const a = props.alert;
  if (a.status === 'resolved') return <span>resolved by {a.resolved?.by}</span>;
  return (
    <>
      {a.status === 'open' ? (
        <form class="inline" method="post" action={`/alerts/${a.id}/ack`}>
          <input type="hidden" name="back" value={props.back} />
          <input type="text" name="note" placeholder="Note" aria-label={`Note for acknowledging alert ${a.id}`} maxlength={4000} />
          <button type="submit" name="action" value="ack">
            Acknowledge
          </button>
        </form>
      ) : null}
      <form class="inline" method="post" action={`/alerts/${a.id}/resolve`}>
        <input type="hidden" name="back" value={props.back} />
        <input type="text" name="note" placeholder="Note" aria-label={`Note for resolving alert ${a.id}`} maxlength={4000} />
        <button type="submit" name="action" value="resolve">
          Resolve
        </button>
      </form>
    </>
  );
}

export function alertsPage(app: Hono<any>, db: Db) {
  page(app, '/alerts', async (c, kit) => {
    const status = optionalText(c.req.query('status'));
    const filter = {
      status: status && (ALERT_STATUSES as readonly string[]).includes(status) ? (status as AlertStatus) : undefined,
      mill: optionalText(c.req.query('mill')),
      grade: optionalText(c.req.query('grade')),
      rule: optionalText(c.req.query('rule')),
    };
    const done = optionalText(c.req.query('done'));
    const [mills, grades, found, all] = await Promise.all([listMills(db), listGrades(db), listAlerts(db, { ...filter, limit: 500 }), listAlerts(db, { limit: 5000 })]);
    const rules = [...new Set(all.alerts.map((a) => a.rule))].sort();
    const back = query(filter);
    const rows = found.alerts.map((a) => ({
      ...a,
      ruleName: alertRuleName(a.rule),
      heatNumber: a.heat?.heatNumber ?? null,
      lotNumber: a.lot?.lotNumber ?? null,
      distance: a.distanceMm === null ? null : mmLabel(a.distanceMm),
      acknowledgedBy: a.acknowledged?.by ?? null,
      acknowledgeNote: a.acknowledged?.note ?? null,
      resolvedBy: a.resolved?.by ?? null,
      resolveNote: a.resolved?.note ?? null,
    }));
    type Row = (typeof rows)[number];
    const counts = new Map<string, { rule: string; severity: string; status: string; count: number }>();
    for (const a of found.alerts) {
      const key = `${a.rule}|${a.severity}|${a.status}`;
      const held = counts.get(key) ?? { rule: alertRuleName(a.rule), severity: a.severity, status: a.status, count: 0 };
      held.count++;
      counts.set(key, held);
    }
    const countRows = [...counts.values()].sort((x, y) => x.rule.localeCompare(y.rule));
    return {
      title: 'Alerts',
      section: 'alerts',
      body: (
        <>
          <h1>Alerts</h1>
          <p class="lead">What the rules raised on arriving lots: acknowledge what you are looking into, resolve it with a note when it is settled.</p>
          {done ? (
            <p class="notice" role="status" id="done">
              {done}
            </p>
          ) : null}
          <form class="filters" method="get" action="/alerts">
            <Select name="status" label="Status" value={filter.status} any="Any status" options={ALERT_STATUSES.map((s) => ({ value: s, label: s }))} />
            <Select name="mill" label="Mill" value={filter.mill} any="All mills" options={mills.map((m) => ({ value: m.code, label: m.code }))} />
            <Select name="grade" label="Grade" value={filter.grade} any="All grades" options={grades.map((g) => ({ value: g.code, label: g.code }))} />
            <Select name="rule" label="Rule" value={filter.rule} any="All rules" options={rules.map((r) => ({ value: r, label: alertRuleName(r) }))} />
            <button type="submit">Show</button>
          </form>
          <Caution>An alert says a lot deserves a look; it does not reject or release it. Acceptance follows the purchase specification and the judgement of qualified personnel.</Caution>
          {countRows.length
            ? kit.chart({
                id: 'counts',
                title: 'Alerts by rule and severity',
                spec: alertCountSpec(countRows),
                table: {
                  columns: [
                    { key: 'rule', label: 'Rule' },
                    { key: 'severity', label: 'Severity' },
                    { key: 'status', label: 'Status' },
                    { key: 'count', label: 'Alerts', numeric: true },
                  ],
                  rows: countRows,
                },
                openUpTo: 0,
              })
            : null}
          <h2>
            {found.total} alert{found.total === 1 ? '' : 's'}
            {found.total > found.alerts.length ? ` (newest ${found.alerts.length} shown)` : ''}
          </h2>
          {kit.table('alerts', 'Alerts', {
            columns: [
              { key: 'id', label: 'Alert', cell: (r: Row) => <span id={`alert-${r.id}`}>#{r.id}</span> },
              {
                key: 'severity',
                label: 'Severity, status',
                cell: (r: Row) => (
                  <>
                    <Tag kind={SEVERITY_KIND[r.severity]}>{r.severity}</Tag> <span class="status" data-status={r.status}>{r.status}</span>
                  </>
                ),
              },
              { key: 'status', label: 'Status', csvOnly: true },
              {
                key: 'title',
                label: 'What',
                wrap: true,
                cell: (r: Row) => (
                  <>
                    {r.title}
                    <details>
                      <summary>Evidence</summary>
                      <pre class="evidence">{JSON.stringify(r.evidence, null, 2)}</pre>
                    </details>
                    {r.acknowledged ? (
                      <div>
                        <small>
                          Acknowledged by {r.acknowledged.by} {r.acknowledged.at.slice(0, 16).replace('T', ' ')}
                          {r.acknowledged.note ? `: ${r.acknowledged.note}` : ''}
                        </small>
                      </div>
                    ) : null}
                    {r.resolved ? (
                      <div>
                        <small>
                          Resolved by {r.resolved.by} {r.resolved.at.slice(0, 16).replace('T', ' ')}
                          {r.resolved.note ? `: ${r.resolved.note}` : ''}
                        </small>
                      </div>
                    ) : null}
                  </>
                ),
              },
              { key: 'ruleName', label: 'Rule' },
              { key: 'rule', label: 'Rule id', csvOnly: true },
              { key: 'mill', label: 'Mill, grade', cell: (r: Row) => [r.mill, r.grade].filter(Boolean).join(' · ') || '–' },
              { key: 'grade', label: 'Grade', csvOnly: true },
              {
                key: 'heatNumber',
                label: 'Heat, lot',
                cell: (r: Row) =>
                  r.heat ? (
                    <>
                      <a href={`/heats/${r.heat.id}`}>{r.heat.heatNumber}</a>
                      {r.lotNumber ? ` / ${r.lotNumber}` : ''}
                    </>
                  ) : (
                    '–'
                  ),
              },
              { key: 'lotNumber', label: 'Lot', csvOnly: true },
              { key: 'distance', label: 'Distance' },
              { key: 'createdAt', label: 'Raised', cell: (r: Row) => r.createdAt.slice(0, 16).replace('T', ' ') },
              { key: 'actions', label: 'Action', htmlOnly: true, cell: (r: Row) => <AlertActions alert={r} back={back} /> },
              { key: 'acknowledgedBy', label: 'Acknowledged by', csvOnly: true },
              { key: 'acknowledgeNote', label: 'Acknowledge note', csvOnly: true },
              { key: 'resolvedBy', label: 'Resolved by', csvOnly: true },
              { key: 'resolveNote', label: 'Resolve note', csvOnly: true },
            ],
            rows,
          })}
        </>
      ),
    };
  });

  const change = (action: 'ack' | 'resolve') => async (c: Context<any>) => {
    const id = Number(c.req.param('id'));
    const form = await c.req.parseBody();
    const note = typeof form.note === 'string' && form.note.trim() ? form.note.trim().slice(0, 4000) : null;
    const back = typeof form.back === 'string' ? form.back : undefined;
    const by = (c.get('auth') as { name?: string } | undefined)?.name ?? 'web';
    try {
      if (!Number.isInteger(id) || id <= 0) throw new AlertNotFoundError(`alert ${c.req.param('id')} is not on file`);
      if (action === 'ack') await acknowledgeAlert(db, id, { by, note });
      else await resolveAlert(db, id, { by, note });
      return c.redirect(backTo(back, `Alert #${id} ${action === 'ack' ? 'acknowledged' : 'resolved'}.`), 303);
    } catch (error) {
      if (error instanceof AlertNotFoundError || error instanceof AlertStateError) return c.redirect(backTo(back, `Nothing changed: ${error.message}.`), 303);
      throw error;
    }
  };
  app.post('/alerts/:id/ack', change('ack'));
  app.post('/alerts/:id/resolve', change('resolve'));
}
