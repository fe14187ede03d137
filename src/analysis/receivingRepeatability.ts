// Repeatability of the plant's end-quench hardness testing from repeat tests on file: heats the receiving
// laboratory tested more than once (several lots of one heat, or a lot re-tested), taken two tests per
// heat, every common distance a "part" of a one-way gauge study (src/stats/gaugeStudy.ts; Montgomery §8.7;
// AIAG MSA 4th ed.). Two bars of one heat are not one specimen: the figure includes the bar-to-bar scatter
// within a heat and the preparation of two end-quench specimens, so it is an upper bound on the Rockwell
// tester's own repeatability. Compare it with the precision statement of ASTM E18 (repeatability limit
// r = 2.8·s_r between two results on one test block in one laboratory; ASTM E177 §), which covers the
// hardness reading only; a dedicated study (several operators re-reading the same bars) is entered
// through the API and analysed by the same ANOVA with operators.
import type { Db, Executor } from '../db/connection.ts';
import { loadCurves } from '../db/series.ts';
import { listGrades } from '../db/referenceData.ts';
import { gaugeStudy, type GaugeReading, type GaugeStudy } from '../stats/gaugeStudy.ts';
import { DISTANCE_MATCH_MM } from './seriesData.ts';

export interface PlantRepeatability {
  heats: number;
  readings: number;
  /** Repeatability SD of one reading (HRC) and the 95 % repeatability limit 2.8·s_r. */
  sd: number | null;
  limit: number | null;
  study: GaugeStudy | null;
  heatNumbers: string[];
  note: string;
}

/** Repeatability of the receiving laboratory from heats it tested at least twice (one grade, or all). */
/** `from`: only heats cast on or after it (a bound on the load; default everything). */
export async function plantRepeatability(db: Db | Executor, query: { grade?: string; from?: string } = {}): Promise<PlantRepeatability> {
  const grades = query.grade ? [query.grade] : (await listGrades(db as Db)).map((g) => g.code);
  const readings: GaugeReading[] = [];
  const heatNumbers: string[] = [];
  for (const grade of grades) {
    const curves = await loadCurves(db as Db, { grade, from: query.from, source: 'receiving_inspection' });
    const byHeat = new Map<number, typeof curves>();
    for (const c of curves) if (c.source === 'receiving_inspection') byHeat.set(c.heatId, [...(byHeat.get(c.heatId) ?? []), c]);
    for (const tests of byHeat.values()) {
      if (tests.length < 2) continue;
      const [a, b] = tests as [(typeof curves)[number], (typeof curves)[number]];
      let used = false;
      for (const [mm, hrc] of a.readings) {
        const other = [...b.readings].find(([m]) => Math.abs(m - mm) <= DISTANCE_MATCH_MM);
        if (!other) continue;
        const part = `${a.mill}/${a.heatNumber}@${mm}`;
        readings.push({ part, operator: 'receiving', value: hrc }, { part, operator: 'receiving', value: other[1] });
        used = true;
      }
      if (used) heatNumbers.push(`${a.mill}/${a.heatNumber}`);
    }
  }
  const parts = readings.length / 2;
  if (heatNumbers.length < 3 || parts < 10) {
    return { heats: heatNumbers.length, readings: readings.length, sd: null, limit: null, study: null, heatNumbers, note: `${heatNumbers.length} heat(s) tested twice by the receiving laboratory: too few for a repeatability figure (at least 3 heats)` };
  }
  const study = gaugeStudy(readings);
  return {
    heats: heatNumbers.length,
    readings: readings.length,
    sd: study.components.repeatability.sd,
    limit: study.repeatabilityLimit,
    study,
    heatNumbers,
    note: 'two receiving tests of one heat (two bars): includes bar-to-bar scatter within the heat, so it bounds the tester\'s own repeatability from above',
  };
}
