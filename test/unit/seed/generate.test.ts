// The demo generator: deterministic, and every certificate one the service would accept.
import { beforeAll, describe, expect, test } from 'vitest';
import { alloyWeight, curveModel, DEFAULT_DEMO_SEED, generateDemo, positionMm, trueCurve, type DemoData } from '../../../seed/generate.ts';
import { ELEMENT_DECIMALS, REPORTED_ELEMENTS, SCENARIO, type DemoGrade, type ReportedElement } from '../../../seed/scenario.ts';
import { certificateSchema, MAX_HRC, testRecordSchema } from '../../../src/ingest/certificateSchema.ts';
import { initialHardness } from '../../../src/hardenability/martensite.ts';

// The issue fixes "today" for the demo: every date must lie before it.
const TODAY = '2026-12-02';

let data: DemoData;
beforeAll(() => {
  data = generateDemo(DEFAULT_DEMO_SEED);
});

const gradeOf = (code: string): DemoGrade => SCENARIO.grades.find((g) => g.code === code)!;
const readingsOf = (c: DemoData['certificates'][number]) => c.tests[0].readings.map((r) => r.hrc);

describe('determinism', () => {
  test('the same seed gives identical output, another seed a different one', () => {
    const again = generateDemo(DEFAULT_DEMO_SEED);
    expect(JSON.stringify(again)).toBe(JSON.stringify(data));
    const other = generateDemo(DEFAULT_DEMO_SEED + 1);
    expect(JSON.stringify(other.certificates)).not.toBe(JSON.stringify(data.certificates));
  });

  test('a seed that is not a safe integer is refused', () => {
    expect(() => generateDemo(1.5)).toThrow(/safe integer/);
  });
});

describe('the data set', () => {
  test('heats per mill and grade are those of the scenario', () => {
    // Source: the supplies of seed/scenario.ts.
    for (const s of SCENARIO.supplies) {
      expect(data.certificates.filter((c) => c.mill === s.mill && c.grade === s.grade)).toHaveLength(s.heats);
    }
    expect(data.certificates).toHaveLength(SCENARIO.supplies.reduce((n, s) => n + s.heats, 0));
  });

  test('every certificate and re-test passes the import schema, with every date before today', () => {
    const cSchema = certificateSchema(() => TODAY);
    const tSchema = testRecordSchema(() => TODAY);
    for (const c of data.certificates) expect(cSchema.safeParse(c).error).toBeUndefined();
    for (const r of data.retests) expect(tSchema.safeParse(r).error).toBeUndefined();
    for (const c of data.certificates) {
      expect(c.castDate >= SCENARIO.from && c.castDate <= SCENARIO.to).toBe(true);
      for (const l of c.lots) expect(l.receivedDate! < TODAY).toBe(true);
    }
  });

  test('heat numbers are unique per mill', () => {
    const keys = data.certificates.map((c) => `${c.mill}/${c.heatNumber}`);
    expect(new Set(keys).size).toBe(keys.length);
  });

  test('chemistry lies inside the grade limits, with the decimals certificates give', () => {
    // Source: chemistry limits of each grade in seed/scenario.ts (also loaded as the grade's limits).
    for (const c of data.certificates) {
      const limits = data.grades.find((g) => g.code === c.grade)!.chemistryLimits;
      for (const l of limits) {
        const v = c.chemistry[l.element as ReportedElement];
        expect(v, `${c.heatNumber} ${l.element}`).toBeDefined();
        if (l.min !== null) expect(v!).toBeGreaterThanOrEqual(l.min);
        if (l.max !== null) expect(v!).toBeLessThanOrEqual(l.max);
      }
      for (const e of REPORTED_ELEMENTS) {
        expect(c.chemistry[e]!).toBeGreaterThan(0);
        // Decimals per element (common practice: 2 for alloying elements, 3 for P, S, Al).
        expect(c.chemistry[e]).toBe(Number(c.chemistry[e]!.toFixed(ELEMENT_DECIMALS[e])));
      }
    }
  });

  test('grain sizes are ASTM E112 numbers 5 to 8', () => {
    // Source: the issue (grain size 5-8); the mills' grain-size lists in seed/scenario.ts.
    for (const c of data.certificates) expect([5, 6, 7, 8]).toContain(c.grainSize);
  });

  test('curves are at the grade positions, non-increasing, within the scale and rounded', () => {
    for (const c of data.certificates) {
      const grade = gradeOf(c.grade);
      const test = c.tests[0];
      expect(test.distanceSystem).toBe(grade.distanceSystem);
      expect(test.readings.map((r) => r.at)).toEqual(grade.positions);
      const hrc = readingsOf(c);
      for (let i = 1; i < hrc.length; i++) expect(hrc[i]).toBeLessThanOrEqual(hrc[i - 1]);
      for (const v of hrc) {
        // HRC scale 20..70 (common practice; 70 is the import schema's ceiling).
        expect(v).toBeGreaterThanOrEqual(20);
        expect(v).toBeLessThanOrEqual(MAX_HRC);
        // Certificates round to 0.5 HRC or coarser (the mills' steps in seed/scenario.ts).
        expect(Number.isInteger(v * 2)).toBe(true);
      }
      // ASTM A255: the quenched end cannot be harder than 99.9 % martensite of the heat's carbon;
      // 1 HRC of measurement error plus half a rounding step allowed.
      expect(hrc[0]).toBeLessThanOrEqual(initialHardness(c.chemistry.C) + 2);
    }
    for (const r of data.retests) {
      const hrc = r.test.readings.map((x) => x.hrc);
      for (let i = 1; i < hrc.length; i++) expect(hrc[i]).toBeLessThanOrEqual(hrc[i - 1]);
      for (const v of hrc) expect(v >= 0 && v <= MAX_HRC).toBe(true);
    }
  });

  test('a share of lots is re-tested on receipt, each naming a lot of its certificate', () => {
    const lots = data.certificates.reduce((n, c) => n + c.lots.length, 0);
    // Source: the receiving share in seed/scenario.ts (7 %); a binomial count stays within 4 SD.
    const p = SCENARIO.receiving.share;
    expect(Math.abs(data.retests.length - p * lots)).toBeLessThan(4 * Math.sqrt(lots * p * (1 - p)));
    const certificates = new Map(data.certificates.map((c) => [`${c.mill}/${c.heatNumber}`, c]));
    for (const r of data.retests) {
      const c = certificates.get(`${r.mill}/${r.heatNumber}`)!;
      expect(c.lots.map((l) => l.lotNumber)).toContain(r.test.lotNumber);
      expect(r.test.source).toBe('receiving_inspection');
    }
  });

  test('bands: one active standard band per grade and one draft restricted proposal', () => {
    for (const g of SCENARIO.grades) {
      const bands = data.bands.filter((b) => b.grade === g.code);
      expect(bands.filter((b) => b.band.status === 'active' && b.band.kind === 'standard')).toHaveLength(1);
      for (const b of bands) expect(b.band.effectiveFrom <= SCENARIO.from || b.band.status === 'draft').toBe(true);
    }
    const drafts = data.bands.filter((b) => b.band.status === 'draft');
    expect(drafts.map((b) => [b.grade, b.band.kind])).toEqual([[SCENARIO.stories.bandTightening.grade, 'restricted']]);
  });
});

describe('the curve model', () => {
  test('nominal chemistry and grain size 7 give the grade centre curve, inside the band', () => {
    for (const g of SCENARIO.grades) {
      const nominal = Object.fromEntries(REPORTED_ELEMENTS.map((e) => [e, g.chemistry[e].nominal])) as Record<ReportedElement, number>;
      const curve = trueCurve(curveModel(g), nominal, 7);
      curve.forEach((v, i) => expect(v).toBeCloseTo(g.centreHrc[i], 9));
      g.band.forEach((p, i) => {
        // Calibration stated in seed/scenario.ts: mid-band where both limits exist.
        if (p.min !== null && p.max !== null) expect(g.centreHrc[i]).toBe((p.min + p.max) / 2);
        if (p.max !== null) expect(g.centreHrc[i]).toBeLessThan(p.max);
      });
    }
  });

  test("sensitivities are Just's coefficients where the alloy weight is 1, and IH'(C) at the quenched end", () => {
    const g = gradeOf('20MnCr5-D');
    const model = curveModel(g);
    const at11 = g.positions.indexOf(11);
    expect(alloyWeight(positionMm(g, 11))).toBe(1);
    // Just (1969), inch form: 19 HRC per wt% Mn, 20 per wt% Cr, 34 per wt% Mo, 6.4 per wt% Ni.
    expect(model.sensitivity.Mn![at11]).toBeCloseTo(19, 5);
    expect(model.sensitivity.Cr![at11]).toBeCloseTo(20, 5);
    expect(model.sensitivity.Mo![at11]).toBeCloseTo(34, 5);
    expect(model.sensitivity.Ni![at11]).toBeCloseTo(6.4, 5);
    // Just (1969): dJ/dC = (98 - 0.025 E^2) / (2 sqrt(C)), E in sixteenths of an inch.
    const E = 11 / 1.5875;
    expect(model.sensitivity.C![at11]).toBeCloseTo((98 - 0.025 * E * E) / (2 * Math.sqrt(g.chemistry.C.nominal)), 4);
    // At 1.5 mm (under 1/16 in) only carbon acts, through the ASTM A255 initial-hardness polynomial
    // IH = 33.087 + 50.723C + 33.662C^2 - 2.7048C^3 - 107.02C^4 + 43.523C^5, differentiated.
    const c = g.chemistry.C.nominal;
    const dIh = 50.723 + 2 * 33.662 * c - 3 * 2.7048 * c ** 2 - 4 * 107.02 * c ** 3 + 5 * 43.523 * c ** 4;
    expect(model.sensitivity.Mn![0]).toBe(0);
    expect(model.sensitivity.C![0]).toBeCloseTo(dIh, 4);
  });
});
