// Austenite grain size as certificates state it: an ASTM E112 number ("7"), a range ("5-8", "5 to 8",
// "5–8"), a bound ("≥5", ">= 5", "5 or finer", "5 min") or a word ("fine", "fine grain", "FG"; a
// fine-grained steel is ASTM 5 or finer, common practice after ASTM A29 / A304 fine-grain practice).
// What the calculations take:
//  - a number: itself;
//  - a range: its midpoint (the grain size the range centres on), and the range is kept as written;
//  - a bound or a word: no number (the size lies anywhere past the bound), kept as written; the plant
//    model then has no grain size for the heat (it is left out of a fit that uses grain size, and a
//    prediction says it is missing), and the published predictor, which takes no grain-size term, is
//    unaffected.
import { HardenabilityInputError } from './errors.ts';

export interface GrainSizeReading {
  /** The number calculations use, or null when only a bound is known. */
  value: number | null;
  /** As written, when it was not a single number. */
  stated: string | null;
  /** How it was read, in words (null for a plain number). */
  note: string | null;
}

const NUMBER = String.raw`(\d{1,2}(?:[.,]\d)?)`;
const num = (t: string) => Number(t.replace(',', '.'));
const RANGE = new RegExp(String.raw`^${NUMBER}\s*(?:-|–|—|to|bis|à)\s*${NUMBER}$`, 'i');
const AT_LEAST = new RegExp(String.raw`^(?:(?:≥|>=|>|min\.?|minimum)\s*${NUMBER}|${NUMBER}\s*(?:or finer|and finer|min\.?|minimum|\+))$`, 'i');
const AT_MOST = new RegExp(String.raw`^(?:(?:≤|<=|<|max\.?|maximum)\s*${NUMBER}|${NUMBER}\s*(?:or coarser|and coarser|max\.?|maximum))$`, 'i');
const FINE = /^(?:fine|fine grain(?:ed)?|fine-grain(?:ed)?|fg|feinkorn)$/i;

/** Reads a grain size as stated on a certificate; throws with a plain reason when it cannot. */
export function parseGrainSize(input: number | string): GrainSizeReading {
  if (typeof input === 'number') {
    if (!Number.isFinite(input) || input < -1 || input > 15) throw new HardenabilityInputError(`grain size ${input} is not an ASTM E112 number (-1 to 15)`);
    return { value: input, stated: null, note: null };
  }
  const text = input.trim().replace(/\s+/g, ' ').replace(/^(?:astm|g)\s*/i, '');
  const check = (v: number) => {
    if (!(v >= -1 && v <= 15)) throw new HardenabilityInputError(`grain size "${input}": ${v} is not an ASTM E112 number (-1 to 15)`);
    return v;
  };
  if (new RegExp(`^${NUMBER}$`).test(text)) return { value: check(num(text)), stated: null, note: null };
  const range = RANGE.exec(text);
  if (range) {
    const a = check(num(range[1]));
    const b = check(num(range[2]));
    if (!(b > a)) throw new HardenabilityInputError(`grain size "${input}": a range runs from the lower number to the higher`);
    const mid = (a + b) / 2;
    return { value: mid, stated: input.trim(), note: `grain size given as ${a}–${b}: the midpoint ${mid} is used in calculations` };
  }
  const atLeast = AT_LEAST.exec(text);
  if (atLeast) {
    const v = check(num(atLeast[1] ?? atLeast[2]));
    return { value: null, stated: input.trim(), note: `grain size given as ${v} or finer: no single number, so calculations treat it as not reported` };
  }
  const atMost = AT_MOST.exec(text);
  if (atMost) {
    const v = check(num(atMost[1] ?? atMost[2]));
    return { value: null, stated: input.trim(), note: `grain size given as ${v} or coarser: no single number, so calculations treat it as not reported` };
  }
  if (FINE.test(text)) {
    return { value: null, stated: input.trim(), note: 'grain size given as "fine" (ASTM 5 or finer, common practice): no single number, so calculations treat it as not reported' };
  }
  throw new HardenabilityInputError(`grain size "${input}" is not an ASTM E112 number, a range such as "5-8", a bound such as "≥5", or "fine"`);
}
