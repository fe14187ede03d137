// The lots of a grade (optionally one mill) in order of arrival, for the receiving plan. Curves come
// through src/db/series.ts; this only lists the lots, which the series loader does not (a lot without a
// re-test has no curve of its own).
import { sql } from 'drizzle-orm';
import { rowsOf, type Db, type Executor } from './connection.ts';

export interface LotRow {
  lotId: number;
  lotNumber: string;
  heatId: number;
  heatNumber: string;
  mill: string;
  castDate: string;
  /** Received date, or the cast date when the lot has none on file. */
  receivedDate: string;
  receivedOnFile: boolean;
}

/** Lots of a grade in arrival order; `from` keeps those received (or, without a date, cast) on or after it. */
export async function listLotsOfGrade(db: Db | Executor, query: { grade: string; mill?: string; from?: string }): Promise<LotRow[]> {
  const rows = rowsOf<Record<string, unknown>>(
    await db.execute(sql`
      select l.id as lot_id, l.lot_number, h.id as heat_id, h.heat_number, m.code as mill, h.cast_date::text as cast_date,
        l.received_date::text as received_date
      from lots l
      join heats h on h.id = l.heat_id
      join grades g on g.id = h.grade_id
      join mills m on m.id = h.mill_id
      where g.code = ${query.grade}
        ${query.mill ? sql`and m.code = ${query.mill}` : sql``}
        ${query.from ? sql`and coalesce(l.received_date, h.cast_date) >= ${query.from}` : sql``}
      order by coalesce(l.received_date, h.cast_date), h.heat_number, l.lot_number`),
  );
  return rows.map((r) => ({
    lotId: Number(r.lot_id),
    lotNumber: String(r.lot_number),
    heatId: Number(r.heat_id),
    heatNumber: String(r.heat_number),
    mill: String(r.mill),
    castDate: String(r.cast_date),
    receivedDate: String(r.received_date ?? r.cast_date),
    receivedOnFile: r.received_date !== null && r.received_date !== undefined,
  }));
}

/** The newest received date on file (a grade and mill when given), or null with no lots. */
export async function newestReceivedDate(db: Db | Executor, query: { grade?: string; mill?: string } = {}): Promise<string | null> {
  const [row] = rowsOf<{ newest: string | null }>(
    await db.execute(sql`
      select max(coalesce(l.received_date, h.cast_date))::text as newest
      from lots l
      join heats h on h.id = l.heat_id
      join grades g on g.id = h.grade_id
      join mills m on m.id = h.mill_id
      where true
        ${query.grade ? sql`and g.code = ${query.grade}` : sql``}
        ${query.mill ? sql`and m.code = ${query.mill}` : sql``}`),
  );
  return row?.newest ?? null;
}
