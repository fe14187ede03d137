// The invented plant of the demo: a maker of gears and shafts buying bar steel from three invented
// mills in four grades. Plain data only; seed/generate.ts turns it into heats.
//
// Every name here is invented. Grade codes borrow the designations of common steels (a trade term)
// with a "-D" suffix, because the bands and chemistry limits are of our own making: near the H-bands
// of EN 10084 (20MnCr5+H, 18CrNiMo7-6+H), EN 10083-3 (42CrMo4+H) and SAE J1268 (8620H), not copies.
//
// The curve model (see generate.ts) is centred on `centreHrc`: the curve of a heat at the grade's
// nominal chemistry, chosen mid-band where the band has both limits and a few HRC under the maximum
// where it has only a maximum. Near the quenched end it stays under the ASTM A255 initial hardness
// (99.9 % martensite) of the nominal carbon.

export type DistanceSystem = 'mm' | 'sixteenths';

/** Elements the demo certificates report (wt%). */
export const REPORTED_ELEMENTS = ['C', 'Mn', 'Si', 'P', 'S', 'Cr', 'Ni', 'Mo', 'Cu', 'Al'] as const;
export type ReportedElement = (typeof REPORTED_ELEMENTS)[number];

/** Decimals a certificate gives for each element (common practice: 2 for alloying, 3 for P, S, Al). */
export const ELEMENT_DECIMALS: Record<ReportedElement, number> = {
  C: 2, Mn: 2, Si: 2, P: 3, S: 3, Cr: 2, Ni: 2, Mo: 2, Cu: 2, Al: 3,
};

export interface ElementSpec {
  min: number | null;
  max: number | null;
  /** The grade's nominal (aim) content: where a well-run mill aims. */
  nominal: number;
  /** Heat-to-heat standard deviation of a typical mill, wt%. */
  sd: number;
}

export interface DemoBandPoint {
  /** Position in the grade's distance system (mm, or sixteenths of an inch). */
  at: number;
  min: number | null;
  max: number | null;
}

export interface DemoGrade {
  code: string;
  description: string;
  distanceSystem: DistanceSystem;
  chemistry: Record<ReportedElement, ElementSpec>;
  /** Positions a certificate reports, in the grade's system. */
  positions: number[];
  /** Curve at nominal chemistry, one value per position (HRC). */
  centreHrc: number[];
  band: DemoBandPoint[];
  /** Austenitizing temperature of the end-quench test, degrees C (from memory: usual values for such steels). */
  austenitizingC: number;
  barDiametersMm: number[];
}

export interface DemoMill {
  code: string;
  name: string;
  country: string;
  notes: string;
  /** Prefix style of its heat numbers. */
  heatStyle: 'year-serial' | 'running' | 'year-letter';
  /** Standard deviation of its laboratory's hardness readings, HRC. */
  labNoiseHrc: number;
  /** Its certificates round HRC to this step (0.5 or 1). */
  hrcStep: number;
  /** ASTM E112 grain size numbers it reports, with relative weights. */
  grainSizes: Array<[number, number]>;
}

export interface DemoSupply {
  mill: string;
  grade: string;
  heats: number;
  /** Shift of the mill's aim from the grade's nominal, wt% per element. */
  aimShift: Partial<Record<ReportedElement, number>>;
  /** Multiplies the grade's heat-to-heat SD (a tighter or looser melt shop). */
  scatter: number;
}

/** The receiving laboratory of the plant: re-tests a share of lots on arrival. */
export interface ReceivingLab {
  name: string;
  /** Share of lots re-tested. */
  share: number;
  biasHrc: number;
  noiseHrc: number;
  hrcStep: number;
}

export interface PlantedStories {
  manganeseCreep: { mill: string; grade: string; from: string; to: string; mnRise: number };
  copiedCertificate: { mill: string; grade: string; sourceOnOrAfter: string; copyOnOrAfter: string };
  smoothReporting: { mill: string; from: string; noiseHrc: number; step: number };
  failedOnReceipt: { mill: string; grade: string; onOrAfter: string; missByHrc: number };
  /** A mill laboratory that reads high from a date on (its test house's tester out of adjustment). */
  labReadsHigh: { mill: string; grade: string; from: string; biasHrc: number; laboratory: string };
  bandTightening: {
    grade: string;
    /**
     * Share of the standard band's width the proposal takes off, half from each side (rounded to
     * whole HRC, at least 1), at positions fromAt..toAt; elsewhere the standard limits stay.
     */
    narrowShare: number;
    fromAt: number;
    toAt: number;
    effectiveFrom: string;
    comfortableMill: string;
    strugglingMill: string;
    /** What the story is meant to show: shares of each mill's certificates inside the proposal. */
    comfortableShareAtLeast: number;
    strugglingShareAtMost: number;
  };
}

export interface Scenario {
  plant: string;
  /** First and last cast dates of the history (inclusive). */
  from: string;
  to: string;
  /** Band versions in force from this date (before the first heat). */
  bandsFrom: string;
  mills: DemoMill[];
  grades: DemoGrade[];
  supplies: DemoSupply[];
  receiving: ReceivingLab;
  stories: PlantedStories;
}

const MM_POSITIONS = [1.5, 3, 5, 7, 9, 11, 13, 15, 20, 25, 30, 35, 40];
const J_POSITIONS = [1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16, 18, 20, 22, 24, 28, 32];

function band(positions: number[], max: (number | null)[], min: (number | null)[]): DemoBandPoint[] {
  return positions.map((at, i) => ({ at, min: min[i] ?? null, max: max[i] ?? null }));
}

const el = (min: number | null, max: number | null, nominal: number, sd: number): ElementSpec => ({ min, max, nominal, sd });

const GRADES: DemoGrade[] = [
  {
    code: '20MnCr5-D',
    description: 'Case-carburizing steel for gears (band of our own, near 20MnCr5+H)',
    distanceSystem: 'mm',
    chemistry: {
      C: el(0.17, 0.22, 0.195, 0.009),
      Mn: el(1.1, 1.4, 1.24, 0.03),
      Si: el(null, 0.4, 0.25, 0.04),
      P: el(null, 0.025, 0.012, 0.003),
      S: el(0.02, 0.035, 0.027, 0.003),
      Cr: el(1.0, 1.3, 1.15, 0.03),
      Ni: el(null, 0.3, 0.12, 0.03),
      Mo: el(null, 0.1, 0.03, 0.01),
      Cu: el(null, 0.3, 0.15, 0.04),
      Al: el(0.02, 0.045, 0.03, 0.004),
    },
    positions: MM_POSITIONS,
    centreHrc: [43.5, 42.5, 40.5, 38, 35.5, 34, 33, 32, 30, 28, 27, 26, 25.5],
    band: band(
      MM_POSITIONS,
      [47, 47, 46, 44, 42, 41, 40, 39, 37, 35, 34, 33, 32],
      [40, 38, 35, 32, 29, 27, 26, 25, 23, 21, null, null, null],
    ),
    austenitizingC: 870,
    barDiametersMm: [30, 40, 50, 60],
  },
  {
    code: '18CrNiMo7-D',
    description: 'Case-carburizing steel for heavy gears (band of our own, near 18CrNiMo7-6+H)',
    distanceSystem: 'mm',
    chemistry: {
      C: el(0.15, 0.21, 0.18, 0.009),
      Mn: el(0.5, 0.9, 0.7, 0.04),
      Si: el(null, 0.4, 0.25, 0.04),
      P: el(null, 0.025, 0.011, 0.003),
      S: el(null, 0.035, 0.02, 0.004),
      Cr: el(1.5, 1.8, 1.65, 0.035),
      Ni: el(1.4, 1.7, 1.55, 0.035),
      Mo: el(0.25, 0.35, 0.3, 0.015),
      Cu: el(null, 0.3, 0.15, 0.04),
      Al: el(0.02, 0.045, 0.03, 0.004),
    },
    positions: MM_POSITIONS,
    centreHrc: [42.5, 42.5, 42, 41.5, 41, 40.5, 40, 39.5, 38, 37, 36, 35, 34.5],
    band: band(
      MM_POSITIONS,
      [47, 47, 47, 46, 46, 45, 45, 44, 43, 42, 41, 40, 40],
      [38, 38, 37, 37, 36, 36, 35, 35, 33, 32, 31, 30, 29],
    ),
    austenitizingC: 860,
    barDiametersMm: [60, 80, 100],
  },
  {
    code: '4140-D',
    description: 'Through-hardening steel for shafts (band of our own, near 42CrMo4+H / 4140H)',
    distanceSystem: 'mm',
    chemistry: {
      C: el(0.38, 0.43, 0.405, 0.008),
      Mn: el(0.75, 1.0, 0.86, 0.03),
      Si: el(0.15, 0.35, 0.25, 0.03),
      P: el(null, 0.025, 0.011, 0.003),
      S: el(null, 0.035, 0.02, 0.004),
      Cr: el(0.9, 1.2, 1.05, 0.03),
      Ni: el(null, 0.3, 0.1, 0.03),
      Mo: el(0.15, 0.3, 0.22, 0.012),
      Cu: el(null, 0.3, 0.15, 0.04),
      Al: el(0.015, 0.04, 0.025, 0.004),
    },
    positions: MM_POSITIONS,
    centreHrc: [55.5, 55.5, 55, 53.5, 51.5, 49, 47.5, 46, 43.5, 41.5, 40, 39, 38.5],
    band: band(
      MM_POSITIONS,
      [59, 59, 59, 58, 57, 56, 56, 55, 53, 51, 49, 48, 47],
      [52, 52, 51, 49, 46, 42, 39, 37, 34, 32, 31, 30, 30],
    ),
    austenitizingC: 850,
    barDiametersMm: [50, 60, 80, 100],
  },
  {
    code: '8620-D',
    description: 'Case-carburizing steel for pinions, US practice, band in sixteenths of an inch (of our own, near 8620H)',
    distanceSystem: 'sixteenths',
    chemistry: {
      C: el(0.18, 0.23, 0.205, 0.009),
      Mn: el(0.65, 0.95, 0.8, 0.035),
      Si: el(0.15, 0.35, 0.25, 0.03),
      P: el(null, 0.025, 0.012, 0.003),
      S: el(null, 0.04, 0.022, 0.004),
      Cr: el(0.4, 0.65, 0.52, 0.03),
      Ni: el(0.4, 0.7, 0.55, 0.035),
      Mo: el(0.15, 0.25, 0.2, 0.012),
      Cu: el(null, 0.35, 0.15, 0.04),
      Al: el(0.015, 0.045, 0.028, 0.004),
    },
    positions: J_POSITIONS,
    centreHrc: [43.5, 41.5, 38, 34, 30.5, 28, 26.5, 25.5, 24.5, 24, 23.5, 23, 23, 22.5, 22.5, 22, 22, 21.5, 21.5, 21, 21, 20.5],
    band: band(
      J_POSITIONS,
      [47, 46, 44, 41, 38, 35, 33, 31, 30, 29, 28, 28, 27, 27, 26, 26, 26, 25, 25, 25, 24, 24],
      [40, 37, 32, 27, 23, 21, 20],
    ),
    austenitizingC: 925,
    barDiametersMm: [25.4, 38.1, 50.8, 63.5],
  },
];

export const SCENARIO: Scenario = {
  plant: 'Lindqvist Gear & Shaft Works (invented)',
  from: '2023-11-01',
  to: '2026-10-31',
  bandsFrom: '2023-01-01',
  mills: [
    {
      code: 'QUELLMARK',
      name: 'Quellmark Bar Steel (invented)',
      country: 'DE',
      notes: 'Invented mill of the demo scenario.',
      heatStyle: 'year-serial',
      labNoiseHrc: 0.8,
      hrcStep: 0.5,
      grainSizes: [[6, 1], [7, 4], [8, 3]],
    },
    {
      code: 'VARNHOLT',
      name: 'Varnholt Stahlwerk (invented)',
      country: 'AT',
      notes: 'Invented mill of the demo scenario.',
      heatStyle: 'running',
      labNoiseHrc: 1.0,
      hrcStep: 1,
      grainSizes: [[5, 1], [6, 3], [7, 4], [8, 2]],
    },
    {
      code: 'SERRANIA',
      name: 'Aceros Serrania (invented)',
      country: 'ES',
      notes: 'Invented mill of the demo scenario.',
      heatStyle: 'year-letter',
      labNoiseHrc: 1.0,
      hrcStep: 1,
      grainSizes: [[6, 2], [7, 5], [8, 2]],
    },
  ],
  grades: GRADES,
  supplies: [
    { mill: 'QUELLMARK', grade: '20MnCr5-D', heats: 420, aimShift: {}, scatter: 1 },
    { mill: 'QUELLMARK', grade: '4140-D', heats: 300, aimShift: {}, scatter: 0.7 },
    { mill: 'QUELLMARK', grade: '18CrNiMo7-D', heats: 220, aimShift: { Ni: -0.03 }, scatter: 1 },
    { mill: 'VARNHOLT', grade: '20MnCr5-D', heats: 330, aimShift: { C: -0.004, Cr: 0.03 }, scatter: 1.1 },
    { mill: 'VARNHOLT', grade: '4140-D', heats: 300, aimShift: { Mn: 0.06, Cr: 0.06, Mo: 0.02 }, scatter: 1.5 },
    { mill: 'VARNHOLT', grade: '8620-D', heats: 280, aimShift: { Mn: 0.03 }, scatter: 1 },
    { mill: 'SERRANIA', grade: '8620-D', heats: 260, aimShift: { C: -0.003 }, scatter: 1.1 },
    { mill: 'SERRANIA', grade: '18CrNiMo7-D', heats: 180, aimShift: {}, scatter: 1.2 },
    { mill: 'SERRANIA', grade: '20MnCr5-D', heats: 210, aimShift: { Mn: -0.03 }, scatter: 1.2 },
  ],
  receiving: {
    name: 'Lindqvist receiving laboratory (invented)',
    share: 0.07,
    biasHrc: -0.3,
    noiseHrc: 0.9,
    hrcStep: 0.5,
  },
  stories: {
    manganeseCreep: { mill: 'QUELLMARK', grade: '20MnCr5-D', from: '2026-05-01', to: '2026-10-31', mnRise: 0.14 },
    copiedCertificate: { mill: 'VARNHOLT', grade: '8620-D', sourceOnOrAfter: '2025-04-01', copyOnOrAfter: '2025-09-15' },
    smoothReporting: { mill: 'SERRANIA', from: '2025-06-01', noiseHrc: 0.15, step: 2 },
    failedOnReceipt: { mill: 'VARNHOLT', grade: '20MnCr5-D', onOrAfter: '2026-02-01', missByHrc: 2.5 },
    // QUELLMARK tests its heavy 18CrNiMo7-D bars at a second test house (invented), whose hardness tester
    // reads 1.5 HRC high from 2026-03-01 on; the steel itself does not change.
    labReadsHigh: { mill: 'QUELLMARK', grade: '18CrNiMo7-D', from: '2026-03-01', biasHrc: 1.5, laboratory: 'Quellmark Bar Steel (invented) heavy-bar test house' },
    bandTightening: {
      grade: '4140-D',
      narrowShare: 0.35,
      fromAt: 5,
      toAt: 25,
      effectiveFrom: '2027-01-01',
      comfortableMill: 'QUELLMARK',
      strugglingMill: 'VARNHOLT',
      comfortableShareAtLeast: 0.95,
      strugglingShareAtMost: 0.8,
    },
  },
};
