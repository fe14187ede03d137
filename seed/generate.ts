// Deterministic generator of the demo data: (seed) -> mills, grades, bands, certificates, re-tests and
// the planted stories. Pure: no I/O, no clock; the same seed always gives the same output.
//
// Curve model of a heat (our own smooth model, centred on the grade's `centreHrc`):
//   HRC(d) = centre(d) + sum_e s_e(d) (x_e - nominal_e) + g(d) (K - 7),   capped at IH(C),
// made non-increasing by isotonic regression (PAVA; Barlow et al. 1972).
// - s_e(d) for Mn, Cr, Ni, Mo and C: partial derivatives of Just's inch-form equation
//   (E. Just 1969, Metal Progress 96(5) 87-88) at the grade's nominal chemistry, evaluated at
//   E = max(4, d in sixteenths) because the equation is stated from 4/16 in on. Towards the quenched
//   end the alloy effect fades with the weight w(d) = clamp((E - 1)/3, 0, 1) (our own choice: at the
//   quenched end the steel is fully martensitic and only carbon counts), and carbon acts through the
//   ASTM A255 initial hardness IH(C) instead: s_C = (1 - w) IH'(C) + w dJ/dC.
// - g(d) = -0.81 w(d) HRC per ASTM E112 grain size number, the grain-size term of Just's metric form
//   (from memory, low confidence; a small effect).
// - IH(C) is the ASTM A255 hardness of 99.9 % martensite: no reading of a sound test lies above it
//   by more than the measurement error.
// Reported values add laboratory noise (normal), are made non-increasing again, kept within
// 20 HRC (the lower end of the Rockwell C scale in common practice) and IH(C) + 1, and rounded to
// the laboratory's step (0.5 or 1 HRC, as certificates do).

import type { BandInput, GradeInput, MillInput } from '../src/db/referenceData.ts';
import type { CertificateInput, TestRecordInput } from '../src/ingest/certificateSchema.ts';
import { justInchHardness } from '../src/hardenability/just1969.ts';
import { initialHardness } from '../src/hardenability/martensite.ts';
import { MM_PER_SIXTEENTH } from '../src/hardenability/distances.ts';
import type { Chemistry } from '../src/hardenability/types.ts';
import { isotonicRegression } from '../src/stats/isotonic.ts';
import { createRng, type Rng } from '../src/stats/random.ts';
import {
  ELEMENT_DECIMALS,
  REPORTED_ELEMENTS,
  SCENARIO,
  type DemoBandPoint,
  type DemoGrade,
  type DemoMill,
  type DemoSupply,
  type ReportedElement,
  type Scenario,
} from './scenario.ts';

export const DEFAULT_DEMO_SEED = 20261202;

export class DemoScenarioError extends Error {
  override name = 'DemoScenarioError';
}

export interface DemoBand {
  grade: string;
  band: BandInput;
}

export interface ManganeseCreepStory {
  title: string;
  mill: string;
  grade: string;
  from: string;
  to: string;
  mnAimBefore: number;
  mnAimAtEnd: number;
  /** Heats of the mill and grade cast inside the window, in cast order. */
  heatNumbers: string[];
}

export interface CopiedCertificateStory {
  title: string;
  mill: string;
  grade: string;
  sourceHeat: string;
  sourceCastDate: string;
  copyHeat: string;
  copyCastDate: string;
}

export interface SmoothReportingStory {
  title: string;
  mill: string;
  from: string;
  to: string;
  grades: string[];
  heatNumbers: string[];
}

export interface FailedOnReceiptStory {
  title: string;
  mill: string;
  grade: string;
  heatNumber: string;
  lotNumber: string;
  receivedDate: string;
  testDate: string;
  /** Positions (grade's system) where the receiving test is outside the band. */
  failingPositions: number[];
}

export interface LabReadsHighStory {
  title: string;
  mill: string;
  grade: string;
  from: string;
  biasHrc: number;
  /** Heats cast from `from` on whose lots the plant re-tested: the pairs that show the shift. */
  pairedHeatsAfter: string[];
}

export interface BandTighteningStory {
  title: string;
  grade: string;
  /** Version the proposal gets when loaded after the standard band (version 1). */
  proposedVersion: number;
  proposedBand: DemoBandPoint[];
  comfortableMill: string;
  strugglingMill: string;
}

export interface DemoStories {
  manganeseCreep: ManganeseCreepStory;
  copiedCertificate: CopiedCertificateStory;
  smoothReporting: SmoothReportingStory;
  failedOnReceipt: FailedOnReceiptStory;
  labReadsHigh: LabReadsHighStory;
  bandTightening: BandTighteningStory;
}

export interface DemoData {
  seed: number;
  mills: MillInput[];
  grades: GradeInput[];
  bands: DemoBand[];
  /** Canonical certificates (with lots and the mill's curve), in cast-date order. */
  certificates: CertificateInput[];
  /** Receiving-inspection re-tests of lots on file. */
  retests: TestRecordInput[];
  stories: DemoStories;
}

// ---------------------------------------------------------------- dates

const DAY_MS = 86_400_000;
const toDay = (iso: string): number => Date.parse(`${iso}T00:00:00Z`) / DAY_MS;
const fromDay = (day: number): string => new Date(day * DAY_MS).toISOString().slice(0, 10);
export const addDays = (iso: string, days: number): string => fromDay(toDay(iso) + days);
export const daysBetween = (a: string, b: string): number => toDay(b) - toDay(a);

// ---------------------------------------------------------------- numbers

const roundTo = (x: number, decimals: number): number => Number(x.toFixed(decimals));
const roundStep = (x: number, step: number): number => Math.round(x / step) * step;
const clamp = (x: number, lo: number, hi: number): number => Math.min(hi, Math.max(lo, x));

function weightedPick<T>(rng: Rng, items: ReadonlyArray<[T, number]>): T {
  const total = items.reduce((s, [, w]) => s + w, 0);
  let u = rng.next() * total;
  for (const [item, w] of items) {
    u -= w;
    if (u < 0) return item;
  }
  return items[items.length - 1][0];
}

const nonIncreasing = (values: readonly number[]): number[] =>
  isotonicRegression(values, { direction: 'non-increasing' }).fitted;

/** HRC floor of the demo readings: the Rockwell C scale starts at 20 (common practice). */
export const HRC_FLOOR = 20;

// ---------------------------------------------------------------- curve model

export const positionMm = (grade: DemoGrade, at: number): number =>
  grade.distanceSystem === 'mm' ? at : at * MM_PER_SIXTEENTH;

/** Weight of the alloy effect at a distance: 0 at the quenched end, 1 from 4/16 in on. */
export const alloyWeight = (mm: number): number => clamp((mm / MM_PER_SIXTEENTH - 1) / 3, 0, 1);

export interface CurveModel {
  grade: DemoGrade;
  mm: number[];
  weight: number[];
  /** Sensitivity (HRC per wt%) per element per position. */
  sensitivity: Partial<Record<ReportedElement, number[]>>;
  /** HRC per grain size number per position. */
  grainSlope: number[];
}

const MODEL_ELEMENTS = ['C', 'Mn', 'Cr', 'Ni', 'Mo'] as const;
/** Grain-size term of Just's metric form (from memory, low confidence). */
const GRAIN_SIZE_SLOPE = -0.81;

function nominalChemistry(grade: DemoGrade): Chemistry {
  return Object.fromEntries(REPORTED_ELEMENTS.map((e) => [e, grade.chemistry[e].nominal])) as Chemistry;
}

export function curveModel(grade: DemoGrade): CurveModel {
  const nominal = nominalChemistry(grade);
  const mm = grade.positions.map((at) => positionMm(grade, at));
  const weight = mm.map(alloyWeight);
  const h = 1e-4;
  const sensitivity: CurveModel['sensitivity'] = {};
  for (const e of MODEL_ELEMENTS) {
    sensitivity[e] = mm.map((d, i) => {
      const E = Math.max(4, d / MM_PER_SIXTEENTH);
      const up = { ...nominal, [e]: nominal[e]! + h };
      const down = { ...nominal, [e]: nominal[e]! - h };
      const dJust = (justInchHardness(up, E) - justInchHardness(down, E)) / (2 * h);
      if (e !== 'C') return weight[i] * dJust;
      const c = nominal.C!;
      const dIh = (initialHardness(c + h) - initialHardness(c - h)) / (2 * h);
      return (1 - weight[i]) * dIh + weight[i] * dJust;
    });
  }
  return { grade, mm, weight, sensitivity, grainSlope: weight.map((w) => GRAIN_SIZE_SLOPE * w) };
}

/** The heat's own curve (no measurement error), non-increasing and under IH(C). */
export function trueCurve(model: CurveModel, chemistry: Record<ReportedElement, number>, grainSize: number): number[] {
  const { grade } = model;
  const ih = initialHardness(chemistry.C);
  const raw = grade.centreHrc.map((centre, i) => {
    let v = centre + model.grainSlope[i] * (grainSize - 7);
    for (const e of MODEL_ELEMENTS) v += model.sensitivity[e]![i] * (chemistry[e] - grade.chemistry[e].nominal);
    return Math.min(v, ih);
  });
  return nonIncreasing(raw);
}

/** What a laboratory reports: the curve plus noise, non-increasing, within the scale, rounded. */
export function measuredCurve(curve: readonly number[], carbon: number, rng: Rng, noiseHrc: number, step: number, biasHrc = 0): number[] {
  const noisy = nonIncreasing(curve.map((v) => v + biasHrc + noiseHrc * rng.normal()));
  const ceiling = initialHardness(carbon) + 1;
  return noisy.map((v) => roundStep(clamp(v, HRC_FLOOR, ceiling), step));
}

export function withinBand(grade: DemoGrade, readings: readonly number[]): boolean {
  return grade.band.every((p, i) => (p.min === null || readings[i] >= p.min) && (p.max === null || readings[i] <= p.max));
}

// ---------------------------------------------------------------- chemistry

function drawElement(rng: Rng, e: ReportedElement, aim: number, sd: number, min: number | null, max: number | null): number {
  const decimals = ELEMENT_DECIMALS[e];
  const lo = min ?? 10 ** -decimals;
  const hi = max ?? 100;
  for (let attempt = 0; attempt < 100; attempt++) {
    const v = roundTo(aim + sd * rng.normal(), decimals);
    if (v >= lo && v <= hi) return v;
  }
  return roundTo(clamp(aim, lo, hi), decimals);
}

export function manganeseCreepAt(scenario: Scenario, mill: string, grade: string, castDate: string): number {
  const s = scenario.stories.manganeseCreep;
  if (s.mill !== mill || s.grade !== grade || castDate < s.from) return 0;
  return s.mnRise * clamp(daysBetween(s.from, castDate) / daysBetween(s.from, s.to), 0, 1);
}

// ---------------------------------------------------------------- heats

interface LotDraft {
  lotNumber: string;
  receivedDate: string;
  massKg: number;
  barDiameterMm: number;
  purchaseOrder: string;
  retest: { testDate: string; readings: number[] } | null;
}

interface HeatDraft {
  supply: DemoSupply;
  grade: DemoGrade;
  mill: DemoMill;
  castDate: string;
  heatNumber: string;
  certificateNumber: string;
  certificateDate: string;
  testDate: string;
  grainSize: number;
  chemistry: Record<ReportedElement, number>;
  curve: number[];
  reported: number[];
  lots: LotDraft[];
}

function castDates(rng: Rng, scenario: Scenario, count: number): string[] {
  const span = daysBetween(scenario.from, scenario.to);
  const days = Array.from({ length: count }, () => Math.floor(rng.next() * (span + 1)));
  days.sort((a, b) => a - b);
  return days.map((d) => addDays(scenario.from, d));
}

/** The mill laboratory's bias on a heat's certificate (the lab-reads-high story), HRC. */
export function labBiasAt(scenario: Scenario, mill: string, grade: string, castDate: string): number {
  const s = scenario.stories.labReadsHigh;
  return s.mill === mill && s.grade === grade && castDate >= s.from ? s.biasHrc : 0;
}

function isSmooth(scenario: Scenario, mill: string, castDate: string): boolean {
  const s = scenario.stories.smoothReporting;
  return s.mill === mill && castDate >= s.from;
}

function receivingRetest(rng: Rng, scenario: Scenario, draft: HeatDraft, receivedDate: string): LotDraft['retest'] {
  const lab = scenario.receiving;
  const testDate = addDays(receivedDate, rng.int(3));
  // The certificate as reported (with story 6's laboratory bias where it applies): a certificate that
  // passes keeps its re-test inside the band, so that story 4 stays the only lot failing on receipt.
  const certificatePasses = withinBand(draft.grade, draft.reported);
  let readings = measuredCurve(draft.curve, draft.chemistry.C, rng, lab.noiseHrc, lab.hrcStep, lab.biasHrc);
  // The demo keeps one planted lot that fails on receipt: an ordinary re-test of a heat whose
  // certificate passed is drawn again until it passes too, and pulled inside the band at worst.
  for (let attempt = 0; certificatePasses && !withinBand(draft.grade, readings) && attempt < 30; attempt++) {
    readings = measuredCurve(draft.curve, draft.chemistry.C, rng, lab.noiseHrc, lab.hrcStep, lab.biasHrc);
  }
  if (certificatePasses && !withinBand(draft.grade, readings)) {
    readings = nonIncreasing(readings.map((v, i) => clamp(v, draft.grade.band[i].min ?? 0, draft.grade.band[i].max ?? 100)));
  }
  return { testDate, readings };
}

function draftSupply(rng: Rng, scenario: Scenario, supply: DemoSupply, supplyIndex: number): HeatDraft[] {
  const grade = scenario.grades.find((g) => g.code === supply.grade);
  const mill = scenario.mills.find((m) => m.code === supply.mill);
  if (!grade || !mill) throw new DemoScenarioError(`supply ${supply.mill}/${supply.grade} names an unknown mill or grade`);
  const model = curveModel(grade);
  const lotsWeights: Array<[number, number]> = [[1, 0.5], [2, 0.35], [3, 0.15]];
  return castDates(rng, scenario, supply.heats).map((castDate) => {
    const chemistry = {} as Record<ReportedElement, number>;
    for (const e of REPORTED_ELEMENTS) {
      const spec = grade.chemistry[e];
      const aim = spec.nominal + (supply.aimShift[e] ?? 0) + (e === 'Mn' ? manganeseCreepAt(scenario, mill.code, grade.code, castDate) : 0);
      chemistry[e] = drawElement(rng, e, aim, spec.sd * supply.scatter, spec.min, spec.max);
    }
    const grainSize = weightedPick(rng, mill.grainSizes);
    const curve = trueCurve(model, chemistry, grainSize);
    const smooth = isSmooth(scenario, mill.code, castDate);
    const s = scenario.stories.smoothReporting;
    // The laboratory's bias adds no random draw here; only the re-test redraws below can shift the later
    // draws of that one supply's stream (every other supply has its own stream).
    const reported = measuredCurve(curve, chemistry.C, rng, smooth ? s.noiseHrc : mill.labNoiseHrc, smooth ? s.step : mill.hrcStep, labBiasAt(scenario, mill.code, grade.code, castDate));
    const testDate = addDays(castDate, 1 + rng.int(2));
    const certificateDate = addDays(testDate, 1 + rng.int(4));
    const draft: HeatDraft = {
      supply, grade, mill, castDate, heatNumber: '', certificateNumber: '', certificateDate, testDate,
      grainSize, chemistry, curve, reported, lots: [],
    };
    const nLots = weightedPick(rng, lotsWeights);
    let received = addDays(certificateDate, 5 + rng.int(12));
    for (let l = 0; l < nLots; l++) {
      const quarter = Math.floor((Number(received.slice(5, 7)) - 1) / 3) + 1;
      draft.lots.push({
        lotNumber: `L${l + 1}`,
        receivedDate: received,
        massKg: 6000 + 10 * rng.int(1800),
        barDiameterMm: grade.barDiametersMm[rng.int(grade.barDiametersMm.length)],
        purchaseOrder: `PO-${received.slice(0, 4)}-${supplyIndex + 1}${quarter}`,
        retest: rng.next() < scenario.receiving.share ? receivingRetest(rng, scenario, draft, received) : null,
      });
      received = addDays(received, rng.int(3));
    }
    return draft;
  });
}

function formatHeatNumber(mill: DemoMill, castDate: string, serial: number): string {
  const yy = castDate.slice(2, 4);
  switch (mill.heatStyle) {
    case 'year-serial':
      return `Q${yy}-${String(serial).padStart(4, '0')}`;
    case 'running':
      return String(418_000 + serial);
    case 'year-letter':
      return `${yy}S${String(serial).padStart(5, '0')}`;
  }
}

/** Heat and certificate numbers per mill, in cast order; serials skip heats sold to others. */
function numberHeats(rng: Rng, drafts: HeatDraft[]): void {
  const byMill = new Map<string, HeatDraft[]>();
  for (const d of drafts) byMill.set(d.mill.code, [...(byMill.get(d.mill.code) ?? []), d]);
  for (const heats of byMill.values()) {
    heats.sort((a, b) => a.castDate.localeCompare(b.castDate));
    let serial = 0;
    let year = '';
    let certificateSerial = 1000 + rng.int(1000);
    for (const h of heats) {
      const y = h.castDate.slice(0, 4);
      if (h.mill.heatStyle !== 'running' && y !== year) serial = rng.int(40);
      year = y;
      serial += 1 + rng.int(8);
      h.heatNumber = formatHeatNumber(h.mill, h.castDate, serial);
      certificateSerial += 1 + rng.int(5);
      h.certificateNumber = `${h.mill.code.slice(0, 3)}-${h.certificateDate.slice(0, 4)}-${certificateSerial}`;
    }
  }
}

// ---------------------------------------------------------------- planted stories

const ofSupply = (drafts: HeatDraft[], mill: string, grade: string) =>
  drafts.filter((d) => d.mill.code === mill && d.grade.code === grade).sort((a, b) => a.castDate.localeCompare(b.castDate));

function plantCopiedCertificate(scenario: Scenario, drafts: HeatDraft[]): CopiedCertificateStory {
  const s = scenario.stories.copiedCertificate;
  const heats = ofSupply(drafts, s.mill, s.grade);
  const source = heats.find((h) => h.castDate >= s.sourceOnOrAfter && withinBand(h.grade, h.reported));
  const copy = heats.find((h) => h.castDate >= s.copyOnOrAfter && h.lots.every((l) => l.retest === null));
  if (!source || !copy) throw new DemoScenarioError('no heats for the copied-certificate story in its window');
  copy.chemistry = { ...source.chemistry };
  copy.grainSize = source.grainSize;
  copy.reported = [...source.reported];
  return {
    title: 'A certificate copied from an earlier heat',
    mill: s.mill,
    grade: s.grade,
    sourceHeat: source.heatNumber,
    sourceCastDate: source.castDate,
    copyHeat: copy.heatNumber,
    copyCastDate: copy.castDate,
  };
}

function plantFailedOnReceipt(rng: Rng, scenario: Scenario, drafts: HeatDraft[]): FailedOnReceiptStory {
  const s = scenario.stories.failedOnReceipt;
  const heat = ofSupply(drafts, s.mill, s.grade).find(
    (h) => h.castDate >= s.onOrAfter && h.grade.band.every((p, i) => p.min === null || h.reported[i] >= p.min + 1) && withinBand(h.grade, h.reported),
  );
  if (!heat) throw new DemoScenarioError('no heat for the failed-on-receipt story in its window');
  const grade = heat.grade;
  const weights = grade.positions.map((at) => alloyWeight(positionMm(grade, at)));
  // The received bars are less hardenable than the certificate says: the curve drops by w(d)·k,
  // with k chosen so that the worst point misses the minimum by missByHrc.
  let k = Infinity;
  grade.band.forEach((p, i) => {
    if (p.min !== null && weights[i] >= 0.5) k = Math.min(k, (heat.reported[i] - p.min + s.missByHrc) / weights[i]);
  });
  const lab = scenario.receiving;
  const readings = nonIncreasing(heat.reported.map((v, i) => v - weights[i] * k + 0.3 * lab.noiseHrc * rng.normal())).map((v) =>
    roundStep(clamp(v, HRC_FLOOR, 70), lab.hrcStep),
  );
  const lot = heat.lots[0];
  lot.retest = { testDate: addDays(lot.receivedDate, 1), readings };
  const failingPositions = grade.band
    .map((p, i) => ((p.min !== null && readings[i] < p.min) || (p.max !== null && readings[i] > p.max) ? grade.positions[i] : null))
    .filter((x): x is number => x !== null);
  return {
    title: 'A lot that fails on receipt although its certificate passed',
    mill: s.mill,
    grade: s.grade,
    heatNumber: heat.heatNumber,
    lotNumber: lot.lotNumber,
    receivedDate: lot.receivedDate,
    testDate: lot.retest.testDate,
    failingPositions,
  };
}

export function proposedBand(scenario: Scenario): DemoBandPoint[] {
  const s = scenario.stories.bandTightening;
  const grade = scenario.grades.find((g) => g.code === s.grade);
  if (!grade) throw new DemoScenarioError(`band-tightening story names unknown grade ${s.grade}`);
  return grade.band.map((p) => {
    if (p.at < s.fromAt || p.at > s.toAt || p.min === null || p.max === null) return { ...p };
    const cut = Math.max(1, Math.round((s.narrowShare * (p.max - p.min)) / 2));
    return { at: p.at, min: p.min + cut, max: p.max - cut };
  });
}

// ---------------------------------------------------------------- output

const label = (grade: DemoGrade, at: number): string => (grade.distanceSystem === 'mm' ? `${at} mm` : `J${at}`);

function bandInput(grade: DemoGrade, points: DemoBandPoint[], extra: Omit<BandInput, 'points'>): BandInput {
  return {
    ...extra,
    points: points.map((p) => ({ distanceMm: positionMm(grade, p.at), label: label(grade, p.at), minHrc: p.min, maxHrc: p.max })),
  };
}

function certificateOf(scenario: Scenario, h: HeatDraft): CertificateInput {
  const chemistry = Object.fromEntries(REPORTED_ELEMENTS.map((e) => [e, h.chemistry[e]])) as unknown as CertificateInput['chemistry'];
  return {
    mill: h.mill.code,
    grade: h.grade.code,
    heatNumber: h.heatNumber,
    castDate: h.castDate,
    certificateNumber: h.certificateNumber,
    certificateDate: h.certificateDate,
    grainSize: h.grainSize,
    chemistry,
    lots: h.lots.map((l) => ({
      lotNumber: l.lotNumber,
      receivedDate: l.receivedDate,
      massKg: l.massKg,
      barDiameterMm: l.barDiameterMm,
      purchaseOrder: l.purchaseOrder,
    })),
    tests: [
      {
        source: 'mill_certificate',
        basis: 'measured',
        testDate: h.testDate,
        austenitizingC: h.grade.austenitizingC,
        distanceSystem: h.grade.distanceSystem,
        laboratory: labBiasAt(scenario, h.mill.code, h.grade.code, h.castDate) !== 0 ? scenario.stories.labReadsHigh.laboratory : `${h.mill.name} test house`,
        readings: h.grade.positions.map((at, i) => ({ at, hrc: h.reported[i] })),
      },
    ],
  };
}

function retestsOf(scenario: Scenario, h: HeatDraft): TestRecordInput[] {
  return h.lots
    .filter((l) => l.retest !== null)
    .map((l) => ({
      mill: h.mill.code,
      heatNumber: h.heatNumber,
      test: {
        source: 'receiving_inspection',
        lotNumber: l.lotNumber,
        testDate: l.retest!.testDate,
        austenitizingC: h.grade.austenitizingC,
        basis: 'measured',
        distanceSystem: h.grade.distanceSystem,
        laboratory: scenario.receiving.name,
        readings: h.grade.positions.map((at, i) => ({ at, hrc: l.retest!.readings[i] })),
      },
    }));
}

/** The whole demo data set for a seed (any safe integer). */
export function generateDemo(seed: number = DEFAULT_DEMO_SEED, scenario: Scenario = SCENARIO): DemoData {
  if (!Number.isSafeInteger(seed)) throw new DemoScenarioError(`the demo seed must be a safe integer, got ${seed}`);
  const stream = (i: number) => createRng((BigInt(seed) << 8n) + BigInt(i));
  const drafts = scenario.supplies.flatMap((supply, i) => draftSupply(stream(i), scenario, supply, i));
  numberHeats(stream(200), drafts);
  const copiedCertificate = plantCopiedCertificate(scenario, drafts);
  const failedOnReceipt = plantFailedOnReceipt(stream(201), scenario, drafts);
  drafts.sort((a, b) => a.castDate.localeCompare(b.castDate) || a.mill.code.localeCompare(b.mill.code) || a.heatNumber.localeCompare(b.heatNumber));

  const creep = scenario.stories.manganeseCreep;
  const creepGrade = scenario.grades.find((g) => g.code === creep.grade)!;
  const creepSupply = scenario.supplies.find((s) => s.mill === creep.mill && s.grade === creep.grade)!;
  const mnAimBefore = roundTo(creepGrade.chemistry.Mn.nominal + (creepSupply.aimShift.Mn ?? 0), 3);
  const smooth = scenario.stories.smoothReporting;
  const smoothHeats = drafts.filter((d) => isSmooth(scenario, d.mill.code, d.castDate));
  const tightening = scenario.stories.bandTightening;
  const labHigh = scenario.stories.labReadsHigh;

  const stories: DemoStories = {
    manganeseCreep: {
      title: "A mill's manganese aim creeping up",
      mill: creep.mill,
      grade: creep.grade,
      from: creep.from,
      to: creep.to,
      mnAimBefore,
      mnAimAtEnd: roundTo(mnAimBefore + creep.mnRise, 3),
      heatNumbers: drafts
        .filter((d) => d.mill.code === creep.mill && d.grade.code === creep.grade && d.castDate >= creep.from && d.castDate <= creep.to)
        .map((d) => d.heatNumber),
    },
    copiedCertificate,
    smoothReporting: {
      title: 'A mill whose curves are too smooth and always even',
      mill: smooth.mill,
      from: smooth.from,
      to: scenario.to,
      grades: [...new Set(smoothHeats.map((d) => d.grade.code))].sort(),
      heatNumbers: smoothHeats.map((d) => d.heatNumber),
    },
    failedOnReceipt,
    labReadsHigh: {
      title: "A mill laboratory that starts reading high",
      mill: labHigh.mill,
      grade: labHigh.grade,
      from: labHigh.from,
      biasHrc: labHigh.biasHrc,
      pairedHeatsAfter: drafts
        .filter((d) => d.mill.code === labHigh.mill && d.grade.code === labHigh.grade && d.castDate >= labHigh.from && d.lots.some((l) => l.retest !== null))
        .map((d) => d.heatNumber),
    },
    bandTightening: {
      title: 'A band purchasing wants to tighten',
      grade: tightening.grade,
      proposedVersion: 2,
      proposedBand: proposedBand(scenario),
      comfortableMill: tightening.comfortableMill,
      strugglingMill: tightening.strugglingMill,
    },
  };

  const bands: DemoBand[] = scenario.grades.map((g) => ({
    grade: g.code,
    band: bandInput(g, g.band, { effectiveFrom: scenario.bandsFrom, status: 'active', kind: 'standard', reason: 'Purchase specification', author: 'demo' }),
  }));
  const tightGrade = scenario.grades.find((g) => g.code === tightening.grade)!;
  bands.push({
    grade: tightening.grade,
    band: bandInput(tightGrade, stories.bandTightening.proposedBand, {
      effectiveFrom: tightening.effectiveFrom,
      status: 'draft',
      kind: 'restricted',
      reason: 'Purchasing proposal: narrower band for the shaft line',
      author: 'demo',
    }),
  });

  return {
    seed,
    mills: scenario.mills.map((m) => ({ code: m.code, name: m.name, country: m.country, notes: m.notes })),
    grades: scenario.grades.map((g) => ({
      code: g.code,
      description: g.description,
      distanceSystem: g.distanceSystem,
      chemistryLimits: REPORTED_ELEMENTS.filter((e) => g.chemistry[e].min !== null || g.chemistry[e].max !== null).map((e) => ({
        element: e,
        min: g.chemistry[e].min,
        max: g.chemistry[e].max,
      })),
    })),
    bands,
    certificates: drafts.map((d) => certificateOf(scenario, d)),
    retests: drafts.flatMap((d) => retestsOf(scenario, d)),
    stories,
  };
}
