// Skip-lot re-testing of arriving lots, after ISO 2859-3:2005 (Sampling procedures for inspection by
// attributes — Part 3: Skip-lot sampling procedures). Pure: no I/O.
//
// What we take from ISO 2859-3 (its structure, described from memory — the standard's own qualification
// tables were not at hand; the numbers below are our own choices, stated so that an engineer can change
// them): a supplier first qualifies for skipping with a run of consecutive lots
// accepted at lot-by-lot inspection and a product of demonstrated quality; while skipping, lots are
// inspected at a frequency (1/2, 1/3, 1/4, 1/5 here) that is lowered step by step as further inspected
// lots are accepted; a lot that is not accepted interrupts skipping and returns the supplier to lot-by-lot
// inspection, from which it must qualify again. The standard selects the lots to inspect at random with
// the frequency as probability; this plan uses a systematic count (every k-th arriving lot), which is
// reproducible and auditable — an engineer who fears a mill learning the pattern can re-test any lot.
//
// Our rules:
// - A re-tested lot is accepted when its end-quench test lies inside the band at every band distance and
//   the plant's curve agrees with the mill's certificate (mean difference over the common distances
//   within ±3 HRC; the caller judges, src/analysis/receivingPlan.ts).
// - Qualification: `qualifyLots` (10) consecutive accepted re-tests, the mill's weakest-distance Ppk at
//   least `minPpk` (1.0: the band held with a 3σ margin at every distance, the same floor as the
//   capability alert rule), and no open laboratory-agreement signal.
// - The first frequency after qualifying is 1/2; each further `stepLots` (10) consecutive accepted
//   re-tests lowers it one step, down to the floor the evidence allows: 1/5 with Ppk ≥ 1.33 and limits
//   of agreement no wider than ±2.5 HRC, 1/3 otherwise (our choices; common practice is to let the
//   tightest frequencies go only to suppliers with both capability and a trusted laboratory).
// - Return to full inspection (every lot): any re-tested lot not accepted, an open laboratory-agreement
//   signal, or a Ppk below `minPpk`. Qualification then starts again from zero accepted lots.

export type PlanState = 'full' | 'skipping';

export interface LotHistoryItem {
  lotKey: string;
  receivedDate: string;
  /** null when the lot was not re-tested. */
  retest: { accepted: boolean; reason: string | null } | null;
}

export interface SkipLotSettings {
  qualifyLots: number;
  stepLots: number;
  minPpk: number;
  fineFloorPpk: number;
  /** Half-width of the limits of agreement (HRC) at most, for the lowest frequencies. */
  fineFloorAgreementHrc: number;
}

export const DEFAULT_SKIP_LOT_SETTINGS: SkipLotSettings = Object.freeze({
  qualifyLots: 10,
  stepLots: 10,
  minPpk: 1.0,
  fineFloorPpk: 1.33,
  fineFloorAgreementHrc: 2.5,
});

/** The frequencies, highest first: re-test every k-th lot. */
export const SKIP_STEPS = [1, 2, 3, 4, 5] as const;

export interface PlanEvidence {
  /** Weakest-distance Ppk of the mill's certificates (null: too few heats to say). */
  ppk: number | null;
  /** An open laboratory-agreement signal (chart beyond a limit). */
  agreementSignal: boolean;
  /** Half-width of the limits of agreement of the pair bias (null: too few pairs). */
  agreementHalfWidthHrc: number | null;
}

export interface PlanDecision {
  state: PlanState;
  /** Re-test every k-th lot (1 = every lot). */
  every: number;
  /** Accepted re-tests in a row at the end of the history. */
  acceptedInARow: number;
  /** Lots passed without a re-test since the last one. */
  untestedSinceLast: number;
  reasons: string[];
  /** The latest re-test that was not accepted, when it decided the state. */
  lastRejection: { lotKey: string; receivedDate: string; reason: string } | null;
}

/** The floor frequency the evidence allows while skipping. */
function floorEvery(evidence: PlanEvidence, s: SkipLotSettings): number {
  const fine = evidence.ppk !== null && evidence.ppk >= s.fineFloorPpk && evidence.agreementHalfWidthHrc !== null && evidence.agreementHalfWidthHrc <= s.fineFloorAgreementHrc;
  return fine ? 5 : 3;
}

/** Replays the re-test history of a mill and grade (lots in arrival order) and decides the plan now. */
export function skipLotDecision(history: readonly LotHistoryItem[], evidence: PlanEvidence, settings: SkipLotSettings = DEFAULT_SKIP_LOT_SETTINGS): PlanDecision {
  const s = settings;
  let acceptedInARow = 0;
  let untestedSinceLast = 0;
  let lastRejection: PlanDecision['lastRejection'] = null;
  for (const lot of history) {
    if (!lot.retest) {
      untestedSinceLast++;
      continue;
    }
    untestedSinceLast = 0;
    if (lot.retest.accepted) acceptedInARow++;
    else {
      acceptedInARow = 0;
      lastRejection = { lotKey: lot.lotKey, receivedDate: lot.receivedDate, reason: lot.retest.reason ?? 'not accepted' };
    }
  }
  const reasons: string[] = [];
  const blockers: string[] = [];
  if (evidence.agreementSignal) blockers.push("the mill's laboratory no longer agrees with ours (bias chart beyond its limit): its certificates cannot stand in for a re-test");
  if (evidence.ppk === null) blockers.push('too few heats to judge the capability of the supply');
  else if (evidence.ppk < s.minPpk) blockers.push(`the weakest distance's Ppk is ${evidence.ppk.toFixed(2)}, below ${s.minPpk}`);
  if (acceptedInARow < s.qualifyLots) {
    blockers.push(
      lastRejection && acceptedInARow < s.qualifyLots
        ? `${acceptedInARow} accepted re-test(s) since lot ${lastRejection.lotKey} (${lastRejection.reason}); skipping needs ${s.qualifyLots} in a row`
        : `${acceptedInARow} accepted re-test(s) in a row on file; skipping needs ${s.qualifyLots}`,
    );
  }
  if (blockers.length) return { state: 'full', every: 1, acceptedInARow, untestedSinceLast, reasons: ['re-test every lot:', ...blockers], lastRejection };
  const steps = 1 + Math.floor((acceptedInARow - s.qualifyLots) / s.stepLots);
  const floor = floorEvery(evidence, s);
  const every = Math.min(floor, 1 + steps);
  reasons.push(`re-test 1 lot in ${every}:`);
  reasons.push(`${acceptedInARow} accepted re-tests in a row (qualified at ${s.qualifyLots}; one step lower per further ${s.stepLots})`);
  reasons.push(`weakest-distance Ppk ${evidence.ppk!.toFixed(2)} (at least ${s.minPpk} to skip)`);
  if (floor === 3) {
    const why = [
      evidence.ppk! < s.fineFloorPpk ? `Ppk below ${s.fineFloorPpk}` : null,
      evidence.agreementHalfWidthHrc === null ? 'too few pairs to know the limits of agreement' : evidence.agreementHalfWidthHrc > s.fineFloorAgreementHrc ? `limits of agreement ±${evidence.agreementHalfWidthHrc.toFixed(1)} HRC, wider than ±${s.fineFloorAgreementHrc}` : null,
    ].filter(Boolean);
    reasons.push(`never rarer than 1 in 3 here (${why.join('; ')})`);
  } else reasons.push(`laboratory agreement ±${evidence.agreementHalfWidthHrc!.toFixed(1)} HRC allows down to 1 in 5`);
  reasons.push('a re-test that is not accepted returns the mill to re-testing every lot');
  return { state: 'skipping', every, acceptedInARow, untestedSinceLast, reasons, lastRejection };
}

/**
 * Lots due for a re-test under a decision: of the untested lots that arrived after the last re-test
 * (oldest first), every lot when inspecting in full, else every k-th counting on from the last re-test.
 */
export function lotsDue<T extends LotHistoryItem>(history: readonly T[], decision: PlanDecision): T[] {
  let lastTested = -1;
  history.forEach((l, i) => {
    if (l.retest) lastTested = i;
  });
  const after = history.slice(lastTested + 1).filter((l) => !l.retest);
  if (decision.every === 1) return after;
  return after.filter((_, i) => (i + 1) % decision.every === 0);
}
