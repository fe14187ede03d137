// Drift monitoring: false alarms and detection delays of the curve-level scheme (src/analysis/
// curveMonitor.ts, the code the alert rule runs), by seeded simulation (bench/monitoringSim.ts:
// 15 distances, whole-HRC readings, correlated distances, 150 heats a year, reference = first 100 heats).
// The alert rule evaluates at each import the heats on file then; an alert is a signal episode
// (episodesOf). The table uses one evaluation of the whole series; the batching check re-evaluates at
// every import (3 and 25 heats per import) on the first runs of each row and compares the alerts.
// Run: node --import tsx bench/monitoring.bench.ts
import { simulateSeries } from './monitoringSim.ts';
import { episodesOf, findingsOf, monitorSeries, type CurveMonitorSettings, type MonitoredHeat } from '../src/analysis/curveMonitor.ts';
import { DEFAULT_ALERT_SETTINGS } from '../src/alerts/rules/settings.ts';

const settings: CurveMonitorSettings = DEFAULT_ALERT_SETTINGS.curve;
const REF = settings.referenceHeats;
const YEARS = 3;
const PER_YEAR = 150;
const RUNS = Number(process.env.MONITORING_RUNS ?? 300);
const CHECKED = Number(process.env.MONITORING_CHECKED ?? 8);

type Key = string;
/** Alerts as the rule raises them when the heats arrive `per` at a time: episode keys and the heat count on file when raised. */
function alertsBatched(heats: readonly MonitoredHeat[], per: number): Map<Key, number> {
  const out = new Map<Key, number>();
  for (let end = per; end - per < heats.length; end += per) {
    const upTo = Math.min(end, heats.length);
    const fresh = new Set(heats.slice(end - per, upTo).map((h) => h.heatId));
    const m = monitorSeries(heats.slice(0, upTo), settings, null);
    for (const f of findingsOf(m, (id) => fresh.has(id))) {
      const key = `${f.cause}@${f.onset.heatNumber}`;
      if (!out.has(key)) out.set(key, upTo);
    }
  }
  return out;
}

function alertsWhole(heats: readonly MonitoredHeat[]): Key[] {
  const m = monitorSeries(heats, settings, null);
  return episodesOf(m).map((e) => `${e.cause}@${m.monitored[e.onset].heatNumber}`);
}

let identical = true;
let checkedRuns = 0;
function checkBatching(heats: MonitoredHeat[]) {
  const whole = alertsWhole(heats).sort();
  for (const per of [3, 25]) {
    const b = [...alertsBatched(heats, per).keys()].sort();
    if (JSON.stringify(b) !== JSON.stringify(whole)) identical = false;
  }
  checkedRuns++;
}

const pct = (x: number) => `${(100 * x).toFixed(1)} %`;
const quantile = (xs: number[], q: number) => {
  const s = [...xs].sort((a, b) => a - b);
  const v = s[Math.min(s.length - 1, Math.ceil(q * s.length) - 1)];
  return Number.isFinite(v) ? String(v) : '> 300';
};

const started = Date.now();
console.log(`Curve-level scheme, defaults of src/alerts/rules/settings.ts (λ ${settings.lambda}, one false alarm per ${settings.yearsPerFalseAlarm} years, reference ${REF} heats, guarantee ${settings.guarantee}); ${RUNS} seeded runs per row.`);
console.log('');
console.log('In control, 3 years after the reference (alerts = signal episodes):');
console.log('| lag-1 autocorrelation | treatment | false alarms per series-year | series-years with ≥ 1 | level / shape per series-year | heat sheets showing a signal | 100-heat report windows with a signal |');
console.log('| --- | --- | --- | --- | --- | --- | --- |');
for (const [phi, treat] of [[0, true], [0.3, true], [0.5, true], [0.3, false]] as const) {
  let level = 0;
  let shape = 0;
  let yearsWith = 0;
  let sheets = 0;
  let sheetsSignalling = 0;
  let windows = 0;
  let windowsSignalling = 0;
  for (let r = 0; r < RUNS; r++) {
    const heats = simulateSeries({ seed: 10_000 + r + Math.round(phi * 1000), heats: REF + YEARS * PER_YEAR, phi });
    const s = treat ? settings : { ...settings, autocorrelationThreshold: 1 };
    const m = monitorSeries(heats, s, null);
    // The heat sheet shows the scheme's point at its heat; the report charts the heats of its period.
    const flags = m.monitored.map((h) => h.point.level !== null || h.point.shape);
    sheets += flags.length;
    sheetsSignalling += flags.filter(Boolean).length;
    for (let w = 0; w + 100 <= flags.length; w += 100) {
      windows++;
      if (flags.slice(w, w + 100).some(Boolean)) windowsSignalling++;
    }
    const eps = episodesOf(m);
    level += eps.filter((e) => e.cause !== 'shape').length;
    shape += eps.filter((e) => e.cause === 'shape').length;
    const years = new Set(eps.map((e) => Math.floor(e.onset / PER_YEAR)));
    yearsWith += years.size;
    if (treat && r < CHECKED) checkBatching(heats);
  }
  const sy = RUNS * YEARS;
  console.log(`| ${phi} | ${treat ? 'AR(1) residuals when |r1| ≥ ' + settings.autocorrelationThreshold : 'none (switched off)'} | ${((level + shape) / sy).toFixed(3)} | ${pct(yearsWith / sy)} | ${(level / sy).toFixed(3)} / ${(shape / sy).toFixed(3)} | ${pct(sheetsSignalling / sheets)} | ${pct(windowsSignalling / windows)} |`);
}

console.log('');
console.log('Reference size (30 is the smallest allowed), limits widened for it (Gandy & Kvaløy 2013), independent heats, other seeds:');
console.log('| reference | false alarms per series-year | series-years with ≥ 1 | 1σ step: median / p90 heats to signal |');
console.log('| --- | --- | --- | --- |');
for (const refHeats of [30, 50, REF]) {
  const small = { ...settings, referenceHeats: refHeats };
  let alarms = 0;
  let yearsWith = 0;
  const delays: number[] = [];
  for (let r = 0; r < RUNS; r++) {
    const heats = simulateSeries({ seed: 30_000 + r, heats: refHeats + YEARS * PER_YEAR, phi: 0 });
    const eps = episodesOf(monitorSeries(heats, small, null));
    alarms += eps.length;
    yearsWith += new Set(eps.map((e) => Math.floor(e.onset / PER_YEAR))).size;
    const shifted = simulateSeries({ seed: 40_000 + r, heats: refHeats + 50 + 300, phi: 0, shift: (t) => (t >= refHeats + 50 ? 1 : 0) });
    const m = monitorSeries(shifted, small, null);
    const i = m.monitored.findIndex((h, k) => k >= 50 && (h.point.level !== null || h.point.shape));
    delays.push(i < 0 ? Infinity : i - 50 + 1);
  }
  console.log(`| first ${refHeats} heats | ${(alarms / (RUNS * YEARS)).toFixed(3)} | ${pct(yearsWith / (RUNS * YEARS))} | ${quantile(delays, 0.5)} / ${quantile(delays, 0.9)} |`);
}

console.log('');
console.log('Detection (independent heats), shift from the 51st heat after the reference, 300 heats watched; heats counted from the first shifted heat to the first signal, and to the end of the import that brings it at 3 and 25 heats per import:');
console.log('| change | median | 90th percentile | found within 300 | median / p90 until the alert arrives, 3 per import | 25 per import |');
console.log('| --- | --- | --- | --- | --- | --- |');
const START = 50;
const changes: Array<[string, (t: number) => number]> = [
  ['step 0.5σ', (t) => (t >= REF + START ? 0.5 : 0)],
  ['step 1σ', (t) => (t >= REF + START ? 1 : 0)],
  ['step 2σ', (t) => (t >= REF + START ? 2 : 0)],
  ['ramp to 1σ over 50 heats', (t) => (t >= REF + START ? Math.min(1, (t - REF - START + 1) / 50) : 0)],
];
for (const [name, shift] of changes) {
  const delays: number[] = [];
  for (let r = 0; r < RUNS; r++) {
    const heats = simulateSeries({ seed: 50_000 + r, heats: REF + START + 300, phi: 0, shift });
    const m = monitorSeries(heats, settings, null);
    const i = m.monitored.findIndex((h, k) => k >= START && (h.point.level !== null || h.point.shape));
    delays.push(i < 0 ? Infinity : i - START + 1);
    if (r < CHECKED) checkBatching(heats);
  }
  const arrival = (per: number) => delays.map((d) => (Number.isFinite(d) ? Math.ceil((REF + START + d) / per) * per - (REF + START) : Infinity));
  const a3 = arrival(3);
  const a25 = arrival(25);
  console.log(`| ${name} | ${quantile(delays, 0.5)} | ${quantile(delays, 0.9)} | ${pct(delays.filter((d) => d <= 300).length / RUNS)} | ${quantile(a3, 0.5)} / ${quantile(a3, 0.9)} | ${quantile(a25, 0.5)} / ${quantile(a25, 0.9)} |`);
}
console.log('');
console.log(`Batching: alerts re-evaluated at every import (3 and 25 heats per import) on ${checkedRuns} runs against one evaluation of the whole history: ${identical ? 'identical' : 'DIFFERENT'}.`);
console.log(`Elapsed ${((Date.now() - started) / 1000).toFixed(0)} s.`);
if (!identical) process.exitCode = 1;
