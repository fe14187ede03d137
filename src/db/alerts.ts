// Alerts: raised in the caller's transaction with at most one open alert per cause (the partial unique
// index alerts_one_open_per_cause decides, so two concurrent raisers cannot both win), and in the same
// transaction one outbox row per active webhook subscription that wants the event. Acknowledge and
// resolve record who, when and why, and emit their own events the same way.
import { DECISION_CAUTION } from '../caution.ts';
import { sql, type SQL } from 'drizzle-orm';
import { rowsOf, type Db, type Executor } from './connection.ts';

export type Severity = 'info' | 'warning' | 'critical';
export type AlertStatus = 'open' | 'acknowledged' | 'resolved';
export const SEVERITIES: readonly Severity[] = ['info', 'warning', 'critical'];
export const ALERT_STATUSES: readonly AlertStatus[] = ['open', 'acknowledged', 'resolved'];
export const ALERT_EVENTS = ['alert.raised', 'alert.acknowledged', 'alert.resolved'] as const;
export type AlertEvent = (typeof ALERT_EVENTS)[number];

export interface RaiseAlertInput {
  rule: string;
  severity: Severity;
  /** Names the cause; while an alert with this key is not resolved, raising it again changes nothing. */
  causeKey: string;
  title: string;
  /** What a person needs to judge the alert: values, limits, where they came from. */
  evidence: Record<string, unknown>;
  millId?: number | null;
  gradeId?: number | null;
  heatId?: number | null;
  lotId?: number | null;
  distanceMm?: number | null;
}

export interface StatusChange {
  by: string;
  at: string;
  note: string | null;
}

export interface AlertView {
  id: number;
  rule: string;
  severity: Severity;
  causeKey: string;
  title: string;
  status: AlertStatus;
  mill: string | null;
  grade: string | null;
  heat: { id: number; heatNumber: string } | null;
  lot: { id: number; lotNumber: string } | null;
  distanceMm: number | null;
  evidence: Record<string, unknown>;
  createdAt: string;
  acknowledged: StatusChange | null;
  resolved: StatusChange | null;
}

export class AlertNotFoundError extends Error {}
export class AlertStateError extends Error {
  constructor(
    message: string,
    readonly status: AlertStatus,
  ) {
    super(message);
  }
}

export interface RaiseResult {
  alert: AlertView;
  /** False when an unresolved alert for the same cause already existed (it is returned instead). */
  created: boolean;
  /** Outbox rows enqueued. */
  deliveries: number;
}

/** Raises an alert; call inside the transaction that wrote the data it is about. */
export async function raiseAlert(ex: Executor, input: RaiseAlertInput): Promise<RaiseResult> {
  if (!input.causeKey.trim()) throw new Error('an alert needs a cause key');
  const [inserted] = rowsOf<{ id: number }>(
    await ex.execute(sql`
      insert into alerts (rule, severity, cause_key, mill_id, grade_id, heat_id, lot_id, distance_mm, title, evidence)
      values (${input.rule}, ${input.severity}, ${input.causeKey}, ${input.millId ?? null}, ${input.gradeId ?? null},
        ${input.heatId ?? null}, ${input.lotId ?? null}, ${input.distanceMm ?? null}, ${input.title}, ${JSON.stringify(input.evidence)}::jsonb)
      on conflict (cause_key) where status <> 'resolved' do nothing
      returning id`),
  );
  if (!inserted) {
    const [existing] = rowsOf<{ id: number }>(await ex.execute(sql`select id from alerts where cause_key = ${input.causeKey} and status <> 'resolved'`));
    return { alert: (await getAlert(ex, existing.id))!, created: false, deliveries: 0 };
  }
  const alert = (await getAlert(ex, inserted.id))!;
  const deliveries = await enqueueAlertEvent(ex, 'alert.raised', alert, new Date(alert.createdAt));
  return { alert, created: true, deliveries };
}

/**
 * One outbox row per active subscription that asked for this event (or for '*'). The idempotency key
 * names the event, so the same event is never queued twice for a subscription.
 */
export async function enqueueAlertEvent(ex: Executor, event: AlertEvent, alert: AlertView, occurredAt: Date): Promise<number> {
  const key = `${event}:${alert.id}`;
  // The caution travels with the event: a receiver may act on it automatically.
  const payload = { event, id: key, occurredAt: occurredAt.toISOString(), alert, caution: DECISION_CAUTION };
  const rows = rowsOf<{ id: number }>(
    await ex.execute(sql`
      insert into outbox (subscription_id, event_type, idempotency_key, payload)
      select s.id, ${event}, ${key}, ${JSON.stringify(payload)}::jsonb
      from webhook_subscriptions s
      where s.active and (s.events @> ${JSON.stringify([event])}::jsonb or s.events @> '["*"]'::jsonb)
      on conflict (subscription_id, idempotency_key) do nothing
      returning id`),
  );
  return rows.length;
}

export interface AlertFilter {
  status?: AlertStatus;
  mill?: string;
  grade?: string;
  rule?: string;
  heatId?: number;
  limit?: number;
  offset?: number;
}

const SELECT_VIEW = sql`
  select a.*, m.code as mill_code, g.code as grade_code, h.heat_number, l.lot_number
  from alerts a
  left join mills m on m.id = a.mill_id
  left join grades g on g.id = a.grade_id
  left join heats h on h.id = a.heat_id
  left join lots l on l.id = a.lot_id`;

export async function getAlert(ex: Executor, id: number): Promise<AlertView | null> {
  const [row] = rowsOf<AlertRow>(await ex.execute(sql`${SELECT_VIEW} where a.id = ${id}`));
  return row ? viewOf(row) : null;
}

export async function listAlerts(db: Db, filter: AlertFilter = {}): Promise<{ total: number; alerts: AlertView[] }> {
  const conditions: SQL[] = [sql`true`];
  if (filter.status) conditions.push(sql`a.status = ${filter.status}`);
  if (filter.mill) conditions.push(sql`m.code = ${filter.mill}`);
  if (filter.grade) conditions.push(sql`g.code = ${filter.grade}`);
  if (filter.rule) conditions.push(sql`a.rule = ${filter.rule}`);
  if (filter.heatId) conditions.push(sql`a.heat_id = ${filter.heatId}`);
  const where = sql.join(conditions, sql` and `);
  const [{ total }] = rowsOf<{ total: number }>(
    await db.execute(sql`select count(*)::int as total from (${SELECT_VIEW} where ${where}) as x`),
  );
  const rows = rowsOf<AlertRow>(
    await db.execute(sql`${SELECT_VIEW} where ${where} order by a.created_at desc, a.id desc limit ${filter.limit ?? 100} offset ${filter.offset ?? 0}`),
  );
  return { total, alerts: rows.map(viewOf) };
}

export interface StatusChangeInput {
  by: string;
  note?: string | null;
  at?: Date;
}

/** open -> acknowledged. */
export async function acknowledgeAlert(db: Db, id: number, change: StatusChangeInput): Promise<AlertView> {
  return changeStatus(
    db,
    id,
    'alert.acknowledged',
    (at) => sql`update alerts set status = 'acknowledged', acknowledged_by = ${change.by}, acknowledged_at = ${at},
      acknowledge_note = ${change.note ?? null} where id = ${id} and status = 'open' returning id`,
    change.at,
    (status) => `alert ${id} is ${status}; only an open alert can be acknowledged`,
  );
}

/** open or acknowledged -> resolved. A later alert for the same cause may then be raised again. */
export async function resolveAlert(db: Db, id: number, change: StatusChangeInput): Promise<AlertView> {
  return changeStatus(
    db,
    id,
    'alert.resolved',
    (at) => sql`update alerts set status = 'resolved', resolved_by = ${change.by}, resolved_at = ${at},
      resolve_note = ${change.note ?? null} where id = ${id} and status in ('open', 'acknowledged') returning id`,
    change.at,
    (status) => `alert ${id} is already ${status}`,
  );
}

async function changeStatus(
  db: Db,
  id: number,
  event: AlertEvent,
  update: (at: string) => SQL,
  at: Date = new Date(),
  refusal: (status: AlertStatus) => string,
): Promise<AlertView> {
  return db.transaction(async (tx) => {
    const changed = rowsOf<{ id: number }>(await tx.execute(update(at.toISOString())));
    const alert = await getAlert(tx, id);
    if (!alert) throw new AlertNotFoundError(`alert ${id} is not on file`);
    if (changed.length === 0) throw new AlertStateError(refusal(alert.status), alert.status);
    await enqueueAlertEvent(tx, event, alert, at);
    return alert;
  });
}

interface AlertRow {
  id: number;
  rule: string;
  severity: Severity;
  cause_key: string;
  title: string;
  status: AlertStatus;
  mill_code: string | null;
  grade_code: string | null;
  heat_id: number | null;
  heat_number: string | null;
  lot_id: number | null;
  lot_number: string | null;
  distance_mm: number | null;
  evidence: Record<string, unknown> | string;
  created_at: Date | string;
  acknowledged_by: string | null;
  acknowledged_at: Date | string | null;
  acknowledge_note: string | null;
  resolved_by: string | null;
  resolved_at: Date | string | null;
  resolve_note: string | null;
}

const iso = (v: Date | string) => new Date(v).toISOString();

function viewOf(r: AlertRow): AlertView {
  return {
    id: r.id,
    rule: r.rule,
    severity: r.severity,
    causeKey: r.cause_key,
    title: r.title,
    status: r.status,
    mill: r.mill_code,
    grade: r.grade_code,
    heat: r.heat_id !== null && r.heat_number !== null ? { id: r.heat_id, heatNumber: r.heat_number } : null,
    lot: r.lot_id !== null && r.lot_number !== null ? { id: r.lot_id, lotNumber: r.lot_number } : null,
    distanceMm: r.distance_mm === null ? null : Number(r.distance_mm),
    evidence: typeof r.evidence === 'string' ? JSON.parse(r.evidence) : r.evidence,
    createdAt: iso(r.created_at),
    acknowledged: r.acknowledged_at ? { by: r.acknowledged_by ?? '', at: iso(r.acknowledged_at), note: r.acknowledge_note } : null,
    resolved: r.resolved_at ? { by: r.resolved_by ?? '', at: iso(r.resolved_at), note: r.resolve_note } : null,
  };
}

export interface WrittenTest {
  testId: number;
  heatId: number;
  heatNumber: string;
  millId: number;
  mill: string;
  gradeId: number;
  grade: string;
  castDate: string;
  lotId: number | null;
  source: 'mill_certificate' | 'receiving_inspection' | 'outside_lab';
  basis: 'measured' | 'calculated';
  testDate: string | null;
  contentHash: string;
  readings: Array<{ mm: number; label: string; hrc: number }>;
}

/**
 * The end-quench tests of these heats written by the current transaction. A row's created_at defaults
 * to now(), which PostgreSQL fixes at the start of the transaction, so "created_at = now()" picks out
 * exactly the rows this transaction inserted, without the writer having to list them.
 */
export async function testsWrittenInThisTransaction(ex: Executor, heatIds: number[]): Promise<WrittenTest[]> {
  if (heatIds.length === 0) return [];
  const rows = rowsOf<{
    test_id: number | string;
    heat_id: number;
    heat_number: string;
    mill_id: number;
    mill: string;
    grade_id: number;
    grade: string;
    cast_date: string;
    lot_id: number | null;
    source: WrittenTest['source'];
    basis: WrittenTest['basis'];
    test_date: string | null;
    content_hash: string;
    distances: number[];
    labels: string[];
    hrcs: number[];
    censored: Array<string | null>;
  }>(
    await ex.execute(sql`
      select t.id as test_id, h.id as heat_id, h.heat_number, m.id as mill_id, m.code as mill, g.id as grade_id, g.code as grade,
        h.cast_date::text as cast_date, t.lot_id, t.source, t.basis, t.test_date::text as test_date, t.content_hash,
        array_agg(r.distance_mm order by r.distance_mm) as distances, array_agg(r.label order by r.distance_mm) as labels,
        array_agg(r.hrc order by r.distance_mm) as hrcs, array_agg(r.censored order by r.distance_mm) as censored
      from end_quench_tests t
      join heats h on h.id = t.heat_id
      join mills m on m.id = h.mill_id
      join grades g on g.id = h.grade_id
      join end_quench_readings r on r.test_id = t.id
      where t.heat_id = any(${sql.param(heatIds)}::int[]) and t.created_at = now()
      group by t.id, h.id, m.id, g.id
      order by t.id`),
  );
  return rows.map((r) => ({
    testId: Number(r.test_id),
    heatId: r.heat_id,
    heatNumber: r.heat_number,
    millId: r.mill_id,
    mill: r.mill,
    gradeId: r.grade_id,
    grade: r.grade,
    castDate: r.cast_date,
    lotId: r.lot_id,
    source: r.source,
    basis: r.basis,
    testDate: r.test_date,
    contentHash: r.content_hash,
    readings: r.distances.map((mm, i) => {
      const reading = { mm: Number(mm), label: r.labels[i], hrc: Number(r.hrcs[i]) };
      const side = r.censored[i];
      return side === 'below' || side === 'above' ? { ...reading, censored: side } : reading;
    }),
  }));
}
