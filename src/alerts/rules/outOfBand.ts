// Rule "out_of_band": a newly written end-quench test that misses its grade's band in force raises one
// alert per heat and test. The band in force is the grade's active version on the test date (the cast
// date when the test has none); conformance, including monotone interpolation to band distances that
// were not measured, is src/hardenability/conformance.ts. The cause key names the heat and the test's
// content hash, so importing the same test again (which stores nothing new) raises nothing, and while
// the alert is unresolved nothing can raise it twice.
// Severity: critical when a measured reading is outside the band; warning when only interpolated
// values are (a judgement of ours, not from a standard).
import type { Db, Executor } from '../../db/connection.ts';
import type { ApplyResult } from '../../db/certificateStore.ts';
import { listBands } from '../../db/referenceData.ts';
import { raiseAlert, testsWrittenInThisTransaction, type WrittenTest } from '../../db/alerts.ts';
import { testConformance, type TestConformance } from '../../hardenability/conformance.ts';
import { bandInForce, type Band } from '../../hardenability/bands.ts';
import { toBand } from '../../analysis/bandOf.ts';

export const OUT_OF_BAND_RULE = 'out_of_band';

export async function outOfBandRule(tx: Executor, written: ApplyResult): Promise<void> {
  const tests = await testsWrittenInThisTransaction(tx, [...new Set(written.heatIds.values())]);
  // Each grade's band versions are read once; the version in force is picked per test date.
  const versionsByGrade = new Map<string, Band[]>();
  for (const grade of new Set(tests.map((t) => t.grade))) {
    // bandInForce skips drafts; a retired version still governs the dates before its successor.
    versionsByGrade.set(grade, (await listBands(tx as Db, grade)).map(toBand));
  }
  for (const test of tests) {
    const onDate = test.testDate ?? test.castDate;
    const band = bandInForce(versionsByGrade.get(test.grade) ?? [], onDate);
    if (!band) continue;
    const result = testConformance({ id: String(test.testId), source: test.source, testDate: onDate, readings: test.readings }, band);
    if (result.verdict !== 'fail') continue;
    await raiseAlert(tx, alertFor(test, band, result));
  }
}

function alertFor(test: WrittenTest, band: Band, result: TestConformance) {
  const failing = result.points.filter((p) => p.verdict === 'fail');
  const worst = failing.reduce((a, b) => ((b.margin as number) < (a.margin as number) ? b : a));
  const measuredMiss = failing.some((p) => p.basis === 'measured');
  const where = failing.map((p) => `${p.label ?? `${p.mm} mm`} ${p.hrc} HRC`).join(', ');
  return {
    rule: OUT_OF_BAND_RULE,
    severity: measuredMiss ? ('critical' as const) : ('warning' as const),
    causeKey: `${OUT_OF_BAND_RULE}:heat:${test.heatId}:test:${test.contentHash}`,
    title: `Heat ${test.heatNumber} (${test.mill}, ${test.grade}) is outside band v${band.version}: ${where}`,
    millId: test.millId,
    gradeId: test.gradeId,
    heatId: test.heatId,
    lotId: test.lotId,
    distanceMm: worst.mm,
    evidence: {
      summary: `${failing.length} of ${result.points.length} band point(s) missed; worst by ${Math.abs(worst.margin as number)} HRC at ${worst.label ?? `${worst.mm} mm`} (${worst.governingLimit} limit).`,
      test: { id: test.testId, source: test.source, basis: test.basis, testDate: test.testDate, lotId: test.lotId },
      band: { grade: band.grade, version: band.version, kind: band.kind, effectiveFrom: band.effectiveFrom },
      failingPoints: failing.map((p) => ({ label: p.label ?? null, distanceMm: p.mm, hrc: p.hrc, minHrc: p.minHrc ?? null, maxHrc: p.maxHrc ?? null, margin: p.margin, basis: p.basis })),
      points: result.points.map((p) => ({ label: p.label ?? null, distanceMm: p.mm, hrc: p.hrc, verdict: p.verdict, basis: p.basis })),
    },
  };
}
