// Turns validated canonical records into rows ready to store: distances in exact millimetres, canonical
// JSON and content hashes (what makes a repeated certificate or test recognisable), chemistry by column.
import { parseGrainSize } from '../hardenability/grainSize.ts';
import { createHash } from 'node:crypto';
import { makeDistance } from '../hardenability/distances.ts';
import {
  ELEMENTS,
  type CertificateInput,
  type DistanceSystem,
  type EndQuenchTestInput,
  type LotInput,
  type TestRecordInput,
} from './certificateSchema.ts';

export interface PreparedReading {
  distanceMm: number;
  label: string;
  hrc: number;
  censored?: 'below' | 'above';
}

export interface PreparedTest {
  source: EndQuenchTestInput['source'];
  basis: EndQuenchTestInput['basis'];
  lotNumber: string | null;
  testDate: string | null;
  austenitizingC: number | null;
  distanceSystem: DistanceSystem;
  laboratory: string | null;
  readings: PreparedReading[];
  contentHash: string;
}

export interface PreparedLot {
  lotNumber: string;
  receivedDate: string | null;
  massKg: number | null;
  barDiameterMm: number | null;
  purchaseOrder: string | null;
}

export type ChemistryColumns = Record<Lowercase<(typeof ELEMENTS)[number]>, number | null>;

export interface PreparedCertificate {
  key: string;
  mill: string;
  grade: string;
  heatNumber: string;
  castDate: string;
  certificateNumber: string | null;
  certificateDate: string | null;
  /** What calculations use (a stated range: its midpoint; a bound only: null). */
  grainSize: number | null;
  /** As written when it was not one number. */
  grainSizeStated: string | null;
  chemistry: ChemistryColumns;
  otherElements: Record<string, number>;
  /** The certificate's own content (without additive lots and re-tests), canonical. */
  document: CertificateDocument;
  contentHash: string;
  lots: PreparedLot[];
  /** Mill-certificate curves belong to the revision; re-tests are additive. */
  certificateTests: PreparedTest[];
  otherTests: PreparedTest[];
}

export interface PreparedTestRecord {
  key: string;
  mill: string;
  heatNumber: string;
  lot: PreparedLot | null;
  test: PreparedTest;
}

export interface CertificateDocument {
  grade: string;
  castDate: string;
  certificateNumber: string | null;
  certificateDate: string | null;
  grainSize: number | string | null;
  chemistry: Record<string, number>;
  curves: Array<{ distanceSystem: DistanceSystem; basis: string; testDate: string | null; lotNumber: string | null; readings: Array<[number, number] | [number, number, string]> }>;
}

export function heatKey(mill: string, heatNumber: string): string {
  return `${mill}/${heatNumber}`;
}

/** JSON with keys sorted at every level and undefined dropped: equal content gives equal text. */
export function canonicalJson(value: unknown): string {
  return JSON.stringify(sortKeys(value));
}

function sortKeys(value: unknown): unknown {
  if (Array.isArray(value)) return value.map(sortKeys);
  if (value && typeof value === 'object') {
    return Object.fromEntries(
      Object.keys(value as object)
        .sort()
        .filter((k) => (value as Record<string, unknown>)[k] !== undefined)
        .map((k) => [k, sortKeys((value as Record<string, unknown>)[k])]),
    );
  }
  return value;
}

export function sha256(text: string | Uint8Array): string {
  return createHash('sha256').update(text).digest('hex');
}

function prepareTest(t: EndQuenchTestInput, salt: string): PreparedTest {
  const readings = [...t.readings]
    .sort((a, b) => a.at - b.at)
    .map((r) => {
      const at = makeDistance(r.at, t.distanceSystem);
      return { distanceMm: at.mm, label: at.label, hrc: r.hrc, ...(r.censored ? { censored: r.censored } : {}) };
    });
  const prepared = {
    source: t.source,
    basis: t.basis,
    lotNumber: t.lotNumber ?? null,
    testDate: t.testDate ?? null,
    austenitizingC: t.austenitizingC ?? null,
    distanceSystem: t.distanceSystem,
    laboratory: t.laboratory ?? null,
    readings,
  };
  return { ...prepared, contentHash: sha256(salt + canonicalJson(prepared)) };
}

function prepareLot(l: LotInput): PreparedLot {
  return {
    lotNumber: l.lotNumber,
    receivedDate: l.receivedDate ?? null,
    massKg: l.massKg ?? null,
    barDiameterMm: l.barDiameterMm ?? null,
    purchaseOrder: l.purchaseOrder ?? null,
  };
}

export function prepareCertificate(c: CertificateInput): PreparedCertificate {
  const chemistry = Object.fromEntries(ELEMENTS.map((e) => [e.toLowerCase(), c.chemistry[e] ?? null])) as ChemistryColumns;
  const listedChemistry: Record<string, number> = {};
  for (const e of ELEMENTS) if (c.chemistry[e] !== undefined) listedChemistry[e] = c.chemistry[e]!;
  for (const [e, v] of Object.entries(c.chemistry.other ?? {})) listedChemistry[e] = v;
  const grain = c.grainSize === undefined ? { value: null, stated: null } : parseGrainSize(c.grainSize);
  const millTests = c.tests.filter((t) => t.source === 'mill_certificate');
  const document: CertificateDocument = {
    grade: c.grade,
    castDate: c.castDate,
    certificateNumber: c.certificateNumber ?? null,
    certificateDate: c.certificateDate ?? null,
    // As written: a number as before (content hashes of earlier certificates unchanged), a stated range or bound as its text.
    grainSize: c.grainSize ?? null,
    chemistry: listedChemistry,
    curves: millTests
      .map((t) => ({
        distanceSystem: t.distanceSystem,
        basis: t.basis,
        testDate: t.testDate ?? null,
        lotNumber: t.lotNumber ?? null,
        // A censored reading carries its side as a third element; ordinary ones keep the two-element form
        // (so the content hash of every certificate stored before censoring existed is unchanged).
        readings: [...t.readings].sort((a, b) => a.at - b.at).map((r) => (r.censored ? [r.at, r.hrc, r.censored] : [r.at, r.hrc]) as [number, number] | [number, number, string]),
      }))
      .sort((a, b) => canonicalJson(a).localeCompare(canonicalJson(b))),
  };
  const contentHash = sha256(canonicalJson(document));
  return {
    key: heatKey(c.mill, c.heatNumber),
    mill: c.mill,
    grade: c.grade,
    heatNumber: c.heatNumber,
    castDate: c.castDate,
    certificateNumber: c.certificateNumber ?? null,
    certificateDate: c.certificateDate ?? null,
    grainSize: grain.value,
    grainSizeStated: grain.stated,
    chemistry,
    otherElements: c.chemistry.other ?? {},
    document,
    contentHash,
    lots: c.lots.map(prepareLot),
    // A revision's curves are its own rows even when equal to the previous revision's.
    certificateTests: millTests.map((t) => prepareTest(t, contentHash)),
    otherTests: c.tests.filter((t) => t.source !== 'mill_certificate').map((t) => prepareTest(t, '')),
  };
}

export function prepareTestRecord(r: TestRecordInput): PreparedTestRecord {
  return {
    key: heatKey(r.mill, r.heatNumber),
    mill: r.mill,
    heatNumber: r.heatNumber,
    lot: r.lot ? prepareLot(r.lot) : null,
    test: prepareTest({ ...r.test, lotNumber: r.test.lotNumber ?? r.lot?.lotNumber }, ''),
  };
}

export interface FieldDifference {
  field: string;
  stored: unknown;
  received: unknown;
}

/** What differs between two certificate documents, field by field, for a person to read. */
export function diffDocuments(stored: CertificateDocument, received: CertificateDocument): FieldDifference[] {
  const out: FieldDifference[] = [];
  for (const field of ['grade', 'castDate', 'certificateNumber', 'certificateDate', 'grainSize'] as const) {
    if (stored[field] !== received[field]) out.push({ field, stored: stored[field], received: received[field] });
  }
  const elements = new Set([...Object.keys(stored.chemistry), ...Object.keys(received.chemistry)]);
  for (const e of elements) {
    if (stored.chemistry[e] !== received.chemistry[e]) {
      out.push({ field: `chemistry.${e}`, stored: stored.chemistry[e] ?? null, received: received.chemistry[e] ?? null });
    }
  }
  if (canonicalJson(stored.curves) !== canonicalJson(received.curves)) {
    out.push({ field: 'curves', stored: stored.curves, received: received.curves });
  }
  return out;
}
