// Reading a page's query parameters: dates, numbers and choices, each checked, so a bad link gets a plain
// message instead of an error page.

export class ParamError extends Error {}

const ISO_DATE = /^\d{4}-\d{2}-\d{2}$/;

export function optionalDate(value: string | undefined, what: string): string | undefined {
  if (value === undefined || value.trim() === '') return undefined;
  const v = value.trim();
  if (!ISO_DATE.test(v) || Number.isNaN(Date.parse(`${v}T00:00:00Z`))) throw new ParamError(`${what} must be a date written YYYY-MM-DD (got "${value}").`);
  return v;
}

export function optionalNumber(value: string | undefined, what: string, range: { min?: number; max?: number } = {}): number | undefined {
  if (value === undefined || value.trim() === '') return undefined;
  const n = Number(value.trim().replace(',', '.'));
  if (!Number.isFinite(n)) throw new ParamError(`${what} must be a number (got "${value}").`);
  if (range.min !== undefined && n < range.min) throw new ParamError(`${what} must be at least ${range.min}.`);
  if (range.max !== undefined && n > range.max) throw new ParamError(`${what} must be at most ${range.max}.`);
  return n;
}

export function choice<T extends string>(value: string | undefined, allowed: readonly T[], fallback: T): T {
  return value !== undefined && (allowed as readonly string[]).includes(value) ? (value as T) : fallback;
}

export function optionalText(value: string | undefined): string | undefined {
  const v = value?.trim();
  return v ? v : undefined;
}

/** A date window; throws when it ends before it starts. */
export function dateWindow(from: string | undefined, to: string | undefined): { from?: string; to?: string } {
  const f = optionalDate(from, 'The window start');
  const t = optionalDate(to, 'The window end');
  if (f && t && f > t) throw new ParamError('The window starts after it ends.');
  return { from: f, to: t };
}

/** Query string from the non-empty entries. */
export function query(params: Record<string, string | number | undefined | null>): string {
  const u = new URLSearchParams();
  for (const [k, v] of Object.entries(params)) if (v !== undefined && v !== null && v !== '') u.set(k, String(v));
  const s = u.toString();
  return s ? `?${s}` : '';
}

export const fmt = (x: number | null | undefined, digits = 2) => (x === null || x === undefined || !Number.isFinite(x) ? '–' : x.toFixed(digits));
export const mmLabel = (mm: number) => `${Number(mm.toFixed(3))} mm`;

/** The ISO date a number of days before another. */
export function daysBefore(iso: string, days: number): string {
  const d = new Date(`${iso}T00:00:00Z`);
  d.setUTCDate(d.getUTCDate() - days);
  return d.toISOString().slice(0, 10);
}
