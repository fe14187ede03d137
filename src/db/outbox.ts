// The webhook outbox and its subscriptions: rows are enqueued in the transaction that raised the event
// (src/db/alerts.ts), then claimed, delivered and settled here. A claim takes due rows with
// FOR UPDATE SKIP LOCKED and sets locked_until in one short transaction, so several service instances
// share the queue without delivering a row twice at the same time; a claim that is never settled
// (a crashed instance) is taken again once its lock expires (at-least-once delivery).
import { sql } from 'drizzle-orm';
import { rowsOf, type Db, type Executor } from './connection.ts';
import { generateWebhookSecret } from '../alerts/signature.ts';

export type DeliveryStatus = 'pending' | 'delivered' | 'dead';

export interface SubscriptionView {
  id: number;
  url: string;
  events: string[];
  active: boolean;
  createdBy: string | null;
  createdAt: string;
}

export class SubscriptionInputError extends Error {}

/** Creates a subscription; its secret is returned here and never again. */
export async function createSubscription(db: Db, input: { url: string; events: string[]; createdBy?: string | null }): Promise<{ subscription: SubscriptionView; secret: string }> {
  let url: URL;
  try {
    url = new URL(input.url);
  } catch {
    throw new SubscriptionInputError(`${input.url} is not a URL`);
  }
  if (url.protocol !== 'http:' && url.protocol !== 'https:') throw new SubscriptionInputError('a webhook URL must be http or https');
  if (input.events.length === 0) throw new SubscriptionInputError('name at least one event');
  const secret = generateWebhookSecret();
  const [row] = rowsOf<SubscriptionRow>(
    await db.execute(sql`
      insert into webhook_subscriptions (url, events, secret, created_by)
      values (${url.toString()}, ${JSON.stringify([...new Set(input.events)])}::jsonb, ${secret}, ${input.createdBy ?? null})
      returning *`),
  );
  return { subscription: subscriptionView(row), secret };
}

export async function listSubscriptions(db: Db, includeInactive = false): Promise<SubscriptionView[]> {
  const rows = rowsOf<SubscriptionRow>(
    await db.execute(sql`select * from webhook_subscriptions where ${includeInactive ? sql`true` : sql`active`} order by id`),
  );
  return rows.map(subscriptionView);
}

export async function getSubscription(ex: Executor, id: number): Promise<SubscriptionView | null> {
  const [row] = rowsOf<SubscriptionRow>(await ex.execute(sql`select * from webhook_subscriptions where id = ${id}`));
  return row ? subscriptionView(row) : null;
}

/**
 * Deactivates a subscription (its delivery history stays visible) and gives up its undelivered rows,
 * which become dead with the reason. False when there is no active subscription with this id.
 */
export async function deactivateSubscription(db: Db, id: number): Promise<boolean> {
  return db.transaction(async (tx) => {
    const rows = rowsOf<{ id: number }>(await tx.execute(sql`update webhook_subscriptions set active = false where id = ${id} and active returning id`));
    if (rows.length === 0) return false;
    await tx.execute(sql`
      update outbox set status = 'dead', locked_until = null, last_error = 'subscription deleted'
      where subscription_id = ${id} and status = 'pending'`);
    return true;
  });
}

export interface ClaimedDelivery {
  id: number;
  subscriptionId: number;
  url: string;
  secret: string;
  eventType: string;
  idempotencyKey: string;
  payload: unknown;
  /** Attempts including this one. */
  attempt: number;
  /** The claim's lock; a settlement of a claim that lost its lock is ignored (see markFailed). */
  lockedUntil: string;
}

/**
 * Claims up to `limit` due rows for `lockMs`: pending, due, not locked by a live claim, of an active
 * subscription. Rows another transaction is claiming at this moment are skipped, not waited for.
 */
export async function claimDue(db: Db, options: { now: Date; lockMs: number; limit: number }): Promise<ClaimedDelivery[]> {
  const now = options.now.toISOString();
  const until = new Date(options.now.getTime() + options.lockMs).toISOString();
  return db.transaction(async (tx) => {
    const rows = rowsOf<{
      id: number | string;
      subscription_id: number;
      event_type: string;
      idempotency_key: string;
      payload: unknown;
      attempts: number;
      url: string;
      secret: string;
    }>(
      await tx.execute(sql`
        with due as (
          select o.id from outbox o
          join webhook_subscriptions s on s.id = o.subscription_id and s.active
          where o.status = 'pending' and o.next_attempt_at <= ${now}::timestamptz
            and (o.locked_until is null or o.locked_until <= ${now}::timestamptz)
          order by o.next_attempt_at, o.id
          limit ${options.limit}
          for update of o skip locked
        )
        update outbox o set locked_until = ${until}::timestamptz, attempts = o.attempts + 1
        from due, webhook_subscriptions s
        where o.id = due.id and s.id = o.subscription_id
        returning o.id, o.subscription_id, o.event_type, o.idempotency_key, o.payload, o.attempts, s.url, s.secret`),
    );
    return rows
      .map((r) => ({
        id: Number(r.id),
        subscriptionId: r.subscription_id,
        url: r.url,
        secret: r.secret,
        eventType: r.event_type,
        idempotencyKey: r.idempotency_key,
        payload: typeof r.payload === 'string' ? JSON.parse(r.payload) : r.payload,
        attempt: r.attempts,
        lockedUntil: until,
      }))
      .sort((a, b) => a.id - b.id);
  });
}

/** Settles a delivered row (whoever holds the lock now: the receiver has the event). */
export async function markDelivered(ex: Executor, id: number, at: Date): Promise<void> {
  await ex.execute(sql`
    update outbox set status = 'delivered', delivered_at = ${at.toISOString()}::timestamptz, locked_until = null, last_error = null
    where id = ${id} and status = 'pending'`);
}

/**
 * Settles a failed attempt: pending again at `retryAt`, or dead when `dead`. Only while the claim still
 * holds its lock: if the lock expired and another instance claimed the row, that claim decides.
 */
export async function markFailed(ex: Executor, claim: Pick<ClaimedDelivery, 'id' | 'lockedUntil'>, outcome: { error: string; retryAt: Date; dead: boolean }): Promise<boolean> {
  const rows = rowsOf<{ id: number }>(
    await ex.execute(sql`
      update outbox set status = ${outcome.dead ? 'dead' : 'pending'}, next_attempt_at = ${outcome.retryAt.toISOString()}::timestamptz,
        locked_until = null, last_error = ${outcome.error.slice(0, 2000)}
      where id = ${claim.id} and status = 'pending' and locked_until = ${claim.lockedUntil}::timestamptz
      returning id`),
  );
  return rows.length > 0;
}

/**
 * Rows whose last allowed attempt was claimed but never settled (the instance died mid-delivery) and
 * whose lock has expired: they become dead rather than being tried beyond the limit.
 */
export async function buryAbandoned(ex: Executor, options: { now: Date; maxAttempts: number }): Promise<number> {
  const rows = rowsOf<{ id: number }>(
    await ex.execute(sql`
      update outbox set status = 'dead', locked_until = null,
        last_error = coalesce(last_error || '; ', '') || 'the last attempt was never settled (instance stopped?)'
      where status = 'pending' and attempts >= ${options.maxAttempts}
        and locked_until is not null and locked_until <= ${options.now.toISOString()}::timestamptz
      returning id`),
  );
  return rows.length;
}

export interface DeliveryView {
  id: number;
  subscriptionId: number;
  eventType: string;
  idempotencyKey: string;
  status: DeliveryStatus;
  attempts: number;
  nextAttemptAt: string | null;
  lockedUntil: string | null;
  lastError: string | null;
  createdAt: string;
  deliveredAt: string | null;
  payload: unknown;
}

export async function listDeliveries(
  db: Db,
  subscriptionId: number,
  filter: { status?: DeliveryStatus; limit?: number; offset?: number } = {},
): Promise<{ total: number; deliveries: DeliveryView[] }> {
  const where = sql`subscription_id = ${subscriptionId} ${filter.status ? sql`and status = ${filter.status}` : sql``}`;
  const [{ total }] = rowsOf<{ total: number }>(await db.execute(sql`select count(*)::int as total from outbox where ${where}`));
  const rows = rowsOf<OutboxRow>(await db.execute(sql`select * from outbox where ${where} order by id desc limit ${filter.limit ?? 100} offset ${filter.offset ?? 0}`));
  return { total, deliveries: rows.map(deliveryView) };
}

export async function getDelivery(ex: Executor, subscriptionId: number, id: number): Promise<DeliveryView | null> {
  const [row] = rowsOf<OutboxRow>(await ex.execute(sql`select * from outbox where id = ${id} and subscription_id = ${subscriptionId}`));
  return row ? deliveryView(row) : null;
}

export class DeliveryStateError extends Error {}

/**
 * Puts a dead (or waiting) delivery back in the queue now, with a fresh attempt count. A delivered
 * row is refused, and so is a row of a deleted subscription.
 */
export async function retryDelivery(db: Db, subscriptionId: number, id: number, now: Date = new Date()): Promise<DeliveryView | null> {
  return db.transaction(async (tx) => {
    const current = await getDelivery(tx, subscriptionId, id);
    if (!current) return null;
    if (current.status === 'delivered') throw new DeliveryStateError(`delivery ${id} was already delivered`);
    const subscription = await getSubscription(tx, subscriptionId);
    if (!subscription?.active) throw new DeliveryStateError(`subscription ${subscriptionId} was deleted; its deliveries cannot be retried`);
    await tx.execute(sql`
      update outbox set status = 'pending', attempts = 0, next_attempt_at = ${now.toISOString()}::timestamptz, locked_until = null
      where id = ${id} and status <> 'delivered'`);
    return getDelivery(tx, subscriptionId, id);
  });
}

interface SubscriptionRow {
  id: number;
  url: string;
  events: string[] | string;
  active: boolean;
  created_by: string | null;
  created_at: Date | string;
}

interface OutboxRow {
  id: number | string;
  subscription_id: number;
  event_type: string;
  idempotency_key: string;
  payload: unknown;
  status: DeliveryStatus;
  attempts: number;
  next_attempt_at: Date | string | null;
  locked_until: Date | string | null;
  last_error: string | null;
  created_at: Date | string;
  delivered_at: Date | string | null;
}

const iso = (v: Date | string | null) => (v === null ? null : new Date(v).toISOString());

function subscriptionView(r: SubscriptionRow): SubscriptionView {
  return {
    id: r.id,
    url: r.url,
    events: typeof r.events === 'string' ? JSON.parse(r.events) : r.events,
    active: r.active,
    createdBy: r.created_by,
    createdAt: iso(r.created_at)!,
  };
}

function deliveryView(r: OutboxRow): DeliveryView {
  return {
    id: Number(r.id),
    subscriptionId: r.subscription_id,
    eventType: r.event_type,
    idempotencyKey: r.idempotency_key,
    status: r.status,
    attempts: r.attempts,
    nextAttemptAt: r.status === 'pending' ? iso(r.next_attempt_at) : null,
    lockedUntil: iso(r.locked_until),
    lastError: r.last_error,
    createdAt: iso(r.created_at)!,
    deliveredAt: iso(r.delivered_at),
    payload: typeof r.payload === 'string' ? JSON.parse(r.payload) : r.payload,
  };
}
