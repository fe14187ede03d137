// Rule "capability_drop": the Ppk of the last `windowHeats` heats of a mill x grade x band distance
// (x test source), as the series stands after the ingest, below `minPpk`, when the ingest brought at least
// one of those heats. (Only the newest window is judged: the lowest of many overlapping windows of a long
// import would be biased low.)
// Ppk = min(USL − x̄, x̄ − LSL) / 3s with the overall sample SD s (n − 1); one-sided bands use their one
// side (ISO 22514-2; NIST/SEMATECH e-Handbook §6.1.6; src/stats/capability.ts, which also gives the
// Bissell (1990) 95 % interval shown in the evidence). The band is the one in force on the cast date of
// the window's last heat, at that distance. rollingPpk screens with running sums; a window below the
// level is then studied in full by capability().
// With `capability.confidence` (default 0.95) the alert needs the one-sided upper confidence bound of Ppk
// (Bissell 1990) below the level, so that the scatter of a 50-heat estimate alone raises nothing.
// Cause key: rule + mill + grade + source, the distances listed in the evidence (with causePerDistance,
// one cause per distance). Severity: warning (out-of-band heats raise their own
// critical alerts). While the alert is open nothing more is raised; once resolved, the next ingest whose
// new heats still leave the rolling Ppk below the level raises it again.
import type { Executor } from '../../db/connection.ts';
import type { ApplyResult } from '../../db/certificateStore.ts';
import type { SeriesSource } from '../../db/series.ts';
import { raiseAlert, type RaiseAlertInput } from '../../db/alerts.ts';
import { labelFor } from '../../analysis/bandOf.ts';
import { pointsAt, type SeriesPoint } from '../../analysis/seriesData.ts';
import { capability, type CapabilityResult } from '../../stats/capability.ts';
import type { Band } from '../../hardenability/bands.ts';
import { DEFAULT_ALERT_SETTINGS, type AlertRuleSettings } from './settings.ts';
import { bandOnDate, curvesOfSource, distanceKey, ingestScope, lotOf, newHeatsOfSource, type SeriesGroup } from './ingestScope.ts';
import { chartDistances, newestNewCastDate } from './controlSignals.ts';

export const CAPABILITY_DROP_RULE = 'capability_drop';

export interface RollingPpk {
  /** Index of the window's last point. */
  end: number;
  ppk: number;
  mean: number;
  sd: number;
}

/** Ppk of the window of `size` points ending at each of `ends` (pure; running sums). Windows with no spread are left out. */
export function rollingPpk(values: readonly number[], size: number, ends: readonly number[], limitsAt: (end: number) => { lsl: number | null; usl: number | null } | null): RollingPpk[] {
  const prefix = new Float64Array(values.length + 1);
  const prefix2 = new Float64Array(values.length + 1);
  // Centre on the first value to keep the running sums of squares well conditioned.
  const shift = values.length ? values[0] : 0;
  values.forEach((v, i) => {
    prefix[i + 1] = prefix[i] + (v - shift);
    prefix2[i + 1] = prefix2[i] + (v - shift) ** 2;
  });
  const out: RollingPpk[] = [];
  for (const end of ends) {
    const start = end - size + 1;
    if (start < 0) continue;
    const limits = limitsAt(end);
    if (!limits || (limits.lsl === null && limits.usl === null)) continue;
    const s1 = prefix[end + 1] - prefix[start];
    const s2 = prefix2[end + 1] - prefix2[start];
    const m = s1 / size;
    const variance = (s2 - size * m * m) / (size - 1);
    if (!(variance > 1e-12)) continue;
    const sd = Math.sqrt(variance);
    const mean = m + shift;
    const u = limits.usl === null ? Infinity : (limits.usl - mean) / (3 * sd);
    const l = limits.lsl === null ? Infinity : (mean - limits.lsl) / (3 * sd);
    out.push({ end, ppk: Math.min(u, l), mean, sd });
  }
  return out;
}

function limitsOn(group: SeriesGroup, date: string, mm: number): { lsl: number | null; usl: number | null } | null {
  const band = bandOnDate(group.bands, date);
  const p = band?.points.find((x) => Math.abs(x.mm - mm) <= 1e-6);
  return p ? { lsl: p.minHrc ?? null, usl: p.maxHrc ?? null } : null;
}

interface DistanceHit {
  distanceMm: number;
  label: string;
  window: SeriesPoint[];
  lsl: number | null;
  usl: number | null;
  study: CapabilityResult;
  /** The value compared with the level: the upper confidence bound, or the estimate. */
  judged: number;
  nearestLimit: 'minimum' | 'maximum';
}

function study(group: SeriesGroup, band: Band | null, d: number, series: SeriesPoint[], settings: AlertRuleSettings): DistanceHit {
  const size = settings.capability.windowHeats;
  const window = series.slice(series.length - size);
  const limits = limitsOn(group, window[window.length - 1].castDate, d)!;
  const conf = settings.capability.confidence;
  // A two-sided interval at 2c − 1 has the one-sided level c at its upper end.
  const result = capability({ values: window.map((p) => p.value) }, { lsl: limits.lsl, usl: limits.usl }, { percentile: 'never', confidence: conf === null ? 0.95 : 2 * conf - 1 });
  return {
    distanceMm: d,
    label: labelFor(band, d),
    window,
    lsl: limits.lsl,
    usl: limits.usl,
    study: result,
    judged: conf === null ? result.ppk : result.intervals.ppk.upper,
    nearestLimit: result.ppu !== null && (result.ppl === null || result.ppu <= result.ppl) ? 'maximum' : 'minimum',
  };
}

const r2 = (x: number) => Number(x.toFixed(2));

function alertOf(group: SeriesGroup, source: SeriesSource, hits: DistanceHit[], settings: AlertRuleSettings): RaiseAlertInput {
  const size = settings.capability.windowHeats;
  const level = settings.capability.minPpk;
  const conf = settings.capability.confidence;
  const worst = hits.reduce((a, b) => (b.study.ppk < a.study.ppk ? b : a));
  const last = worst.window[worst.window.length - 1];
  const labels = hits.map((h) => h.label);
  const where = labels.length > 4 ? `${labels.length} distances (${labels.slice(0, 4).join(', ')} ...)` : labels.join(', ');
  const basis = conf === null ? 'estimate' : `upper ${Math.round(conf * 100)} % confidence bound`;
  return {
    rule: CAPABILITY_DROP_RULE,
    severity: 'warning',
    causeKey: `${CAPABILITY_DROP_RULE}:mill:${group.millId}:grade:${group.gradeId}${settings.causePerDistance ? `:mm:${distanceKey(worst.distanceMm)}` : ''}:source:${source}`,
    title: `${group.mill} ${group.grade} at ${where}: Ppk of the last ${size} heats below ${level} (lowest ${r2(worst.study.ppk)} at ${worst.label}, toward the band ${worst.nearestLimit})`,
    millId: group.millId,
    gradeId: group.gradeId,
    heatId: last.heatId,
    lotId: lotOf(group, last.heatId),
    distanceMm: worst.distanceMm,
    evidence: {
      summary:
        `Over the last ${size} heats of ${group.mill} ${group.grade} (${worst.window[0].heatNumber}, cast ${worst.window[0].castDate}, to ${last.heatNumber}, cast ${last.castDate}) ` +
        `the Ppk is below ${level} at ${labels.join(', ')} (judged on the ${basis}). Lowest at ${worst.label}: mean ${r2(worst.study.mean)} HRC, SD ${r2(worst.study.sigmaOverall)} HRC ` +
        `against a band of ${worst.lsl ?? '-'} to ${worst.usl ?? '-'} HRC, Ppk ${r2(worst.study.ppk)}, about ${Math.round(worst.study.expectedPpm.overall.total)} PPM expected outside.`,
      series: { mill: group.mill, grade: group.grade, source },
      level,
      basis,
      window: { heats: size, from: { heatNumber: worst.window[0].heatNumber, castDate: worst.window[0].castDate }, to: { heatNumber: last.heatNumber, castDate: last.castDate } },
      distances: hits.map((h) => ({
        distanceMm: h.distanceMm,
        label: h.label,
        lsl: h.lsl,
        usl: h.usl,
        nearestLimit: h.nearestLimit,
        ppk: h.study.ppk,
        ppkInterval: { ...h.study.intervals.ppk, confidence: h.study.confidence },
        ppu: h.study.ppu,
        ppl: h.study.ppl,
        mean: h.study.mean,
        sd: h.study.sigmaOverall,
        expectedPpm: h.study.expectedPpm.overall,
        observedPpm: h.study.observedPpm,
        flags: h.study.flags,
      })),
    },
  };
}

/** The capability-drop rule with the given settings. */
export function capabilityDropRule(settings: AlertRuleSettings = DEFAULT_ALERT_SETTINGS) {
  return async function capabilityDrop(tx: Executor, written: ApplyResult): Promise<void> {
    if (!settings.capability.enabled) return;
    const size = settings.capability.windowHeats;
    const scope = await ingestScope(tx, written, settings.historyDays);
    for (const group of scope.groups) {
      const band = bandOnDate(group.bands, newestNewCastDate(group));
      if (!band) continue;
      for (const source of settings.sources) {
        const fresh = newHeatsOfSource(group, source);
        if (fresh.size === 0) continue;
        const curves = curvesOfSource(group, source);
        const hits: DistanceHit[] = [];
        for (const d of chartDistances(group, band)) {
          const series = pointsAt(curves, d);
          // The last `size` heats of the series after this ingest, if it brought one of them.
          const end = series.length - 1;
          if (end + 1 < size || !series.slice(end + 1 - size).some((p) => fresh.has(p.heatId))) continue;
          const [screen] = rollingPpk(series.map((p) => p.value), size, [end], (e) => limitsOn(group, series[e].castDate, d));
          if (!screen || !(screen.ppk < settings.capability.minPpk)) continue;
          const hit = study(group, band, d, series, settings);
          if (hit.judged < settings.capability.minPpk) hits.push(hit);
        }
        const causes = settings.causePerDistance ? hits.map((h) => [h]) : hits.length ? [hits] : [];
        for (const c of causes) await raiseAlert(tx, alertOf(group, source, c, settings));
      }
    }
  };
}
