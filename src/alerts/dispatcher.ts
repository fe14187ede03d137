// The webhook dispatcher: every interval it claims due outbox rows (short transaction, row locks
// skipped by other instances), posts each one outside any transaction with its signature and
// idempotency key, and settles it: delivered on a 2xx answer; otherwise retried after an exponential
// back-off with jitter (backoff.ts), and dead once maxAttempts attempts have failed. The default
// schedule (DEFAULT_RETRY_SCHEDULE) spends its 20 attempts over 24.1-48.3 h.
//
// Ordering: none is promised between the events of one subscription. Rows are claimed oldest due
// first, but a failed event waits out its back-off while later events go ahead, and delivery is at
// least once (a lost answer or a crash after the POST sends the event again, same Idempotency-Key).
// Receivers deduplicate by Idempotency-Key and order by the payload's occurredAt.
import type { Db } from '../db/connection.ts';
import type { Logger } from '../logger.ts';
import { DEFAULT_RETRY_SCHEDULE, backoffDelayMs } from './backoff.ts';
import { buryAbandoned, claimDue, markDelivered, markFailed, type ClaimedDelivery } from '../db/outbox.ts';
import { signedHeaders } from './signature.ts';

export const IDEMPOTENCY_HEADER = 'Idempotency-Key';
export const EVENT_HEADER = 'X-Endquench-Event';
export const DELIVERY_HEADER = 'X-Endquench-Delivery';

export interface DispatcherOptions {
  db: Db;
  fetch?: typeof globalThis.fetch;
  clock?: () => Date;
  /** Uniform [0, 1) numbers for the jitter. */
  random?: () => number;
  logger?: Pick<Logger, 'info' | 'warn' | 'error' | 'debug'>;
  /** Attempts before a delivery is dead (default 20). */
  maxAttempts?: number;
  /** Back-off ceiling after the first failure and its cap (defaults 60 s and 4 h). */
  baseDelayMs?: number;
  maxDelayMs?: number;
  /** Time a receiver has to answer (default 10 s). */
  timeoutMs?: number;
  /** How long a claim holds its rows (default 6 x timeoutMs; must exceed timeoutMs). */
  lockMs?: number;
  /** Rows claimed per round (default 20) and rows posted at once (default 5). */
  batchSize?: number;
  concurrency?: number;
  /** Pause between rounds for start() (default 2 s). */
  intervalMs?: number;
}

export interface RoundResult {
  claimed: number;
  delivered: number;
  retrying: number;
  dead: number;
  /** Rows whose last attempt was abandoned by a stopped instance and were declared dead. */
  buried: number;
}

export interface Dispatcher {
  /** One round: claim, deliver, settle. */
  runOnce(): Promise<RoundResult>;
  /** Rounds every intervalMs until stop(); a round that finds a full batch runs the next at once. */
  start(): void;
  /** Stops the loop and waits for the round in progress. */
  stop(): Promise<void>;
  readonly running: boolean;
}

export class DispatcherConfigError extends Error {}

export function createDispatcher(options: DispatcherOptions): Dispatcher {
  const db = options.db;
  const fetchFn = options.fetch ?? globalThis.fetch;
  const clock = options.clock ?? (() => new Date());
  const random = options.random ?? Math.random;
  const log = options.logger;
  const maxAttempts = options.maxAttempts ?? DEFAULT_RETRY_SCHEDULE.maxAttempts;
  const baseDelayMs = options.baseDelayMs ?? DEFAULT_RETRY_SCHEDULE.baseMs;
  const maxDelayMs = options.maxDelayMs ?? DEFAULT_RETRY_SCHEDULE.maxMs;
  const timeoutMs = options.timeoutMs ?? 10_000;
  const lockMs = options.lockMs ?? timeoutMs * 6;
  const batchSize = options.batchSize ?? 20;
  const concurrency = options.concurrency ?? 5;
  const intervalMs = options.intervalMs ?? 2_000;
  if (!Number.isInteger(maxAttempts) || maxAttempts < 1) throw new DispatcherConfigError('maxAttempts must be a whole number >= 1');
  if (!(lockMs > timeoutMs)) throw new DispatcherConfigError('lockMs must exceed timeoutMs, or a slow receiver would let another instance claim the same row');
  if (!(batchSize >= 1 && concurrency >= 1 && intervalMs > 0)) throw new DispatcherConfigError('batchSize, concurrency and intervalMs must be positive');

  async function deliver(row: ClaimedDelivery): Promise<'delivered' | 'retrying' | 'dead'> {
    const body = JSON.stringify(row.payload);
    let failure: string;
    try {
      const response = await fetchFn(row.url, {
        method: 'POST',
        headers: {
          'content-type': 'application/json',
          'user-agent': 'endquench-webhooks',
          [IDEMPOTENCY_HEADER]: row.idempotencyKey,
          [EVENT_HEADER]: row.eventType,
          [DELIVERY_HEADER]: String(row.id),
          ...signedHeaders(row.secret, body, clock()),
        },
        body,
        signal: AbortSignal.timeout(timeoutMs),
        redirect: 'manual',
      });
      // Read (and drop) the answer so the connection can be reused.
      const text = await response.text().catch(() => '');
      if (response.status >= 200 && response.status < 300) {
        await markDelivered(db, row.id, clock());
        return 'delivered';
      }
      failure = `HTTP ${response.status}${text ? `: ${text.slice(0, 200)}` : ''}`;
    } catch (error) {
      failure = describeError(error);
    }
    const dead = row.attempt >= maxAttempts;
    const retryAt = new Date(clock().getTime() + (dead ? 0 : backoffDelayMs(row.attempt, { baseMs: baseDelayMs, maxMs: maxDelayMs }, random())));
    const error = `attempt ${row.attempt}/${maxAttempts}: ${failure}`;
    await markFailed(db, row, { error, retryAt, dead });
    (dead ? log?.warn : log?.debug)?.call(log, { delivery: row.id, url: row.url, error }, dead ? 'webhook delivery is dead' : 'webhook delivery failed; will retry');
    return dead ? 'dead' : 'retrying';
  }

  async function runOnce(): Promise<RoundResult> {
    const now = clock();
    const buried = await buryAbandoned(db, { now, maxAttempts });
    const claimed = await claimDue(db, { now, lockMs, limit: batchSize });
    const result: RoundResult = { claimed: claimed.length, delivered: 0, retrying: 0, dead: 0, buried };
    const queue = [...claimed];
    const workers = Array.from({ length: Math.min(concurrency, queue.length) }, async () => {
      for (let row = queue.shift(); row; row = queue.shift()) result[await deliver(row)]++;
    });
    await Promise.all(workers);
    return result;
  }

  let timer: NodeJS.Timeout | null = null;
  let current: Promise<unknown> | null = null;
  let stopped = true;

  const schedule = (delay: number) => {
    if (stopped) return;
    timer = setTimeout(() => {
      timer = null;
      current = runOnce()
        .then((r) => schedule(r.claimed >= batchSize ? 0 : intervalMs))
        .catch((error) => {
          log?.error({ err: error }, 'webhook dispatcher round failed');
          schedule(intervalMs);
        })
        .finally(() => {
          current = null;
        });
    }, delay);
    timer.unref?.();
  };

  return {
    runOnce,
    start() {
      if (!stopped) return;
      stopped = false;
      schedule(0);
    },
    async stop() {
      stopped = true;
      if (timer) clearTimeout(timer);
      timer = null;
      await current;
    },
    get running() {
      return !stopped;
    },
  };
}

function describeError(error: unknown): string {
  const e = error as { name?: string; message?: string; cause?: { code?: string; message?: string } };
  if (e?.name === 'TimeoutError') return 'no answer in time';
  const cause = e?.cause?.code ?? e?.cause?.message;
  return `${e?.message ?? String(error)}${cause ? ` (${cause})` : ''}`;
}
