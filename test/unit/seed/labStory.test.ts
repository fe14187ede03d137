// The planted laboratory bias (seed/scenario.ts, story 6): the mill's certificates of one supply read
// biasHrc high from the date on, and nothing outside that supply's later heats changes. Checked against
// the same generator run with the bias set to zero (the invented scenario is the only reference here).
// Within the supply after the date, a re-test redrawn to stay inside the band (seed/generate.ts) moves the
// later random draws, so heats are compared only where their chemistry (hence their true curve) agrees.
import { describe, expect, it } from 'vitest';
import { generateDemo } from '../../../seed/generate.ts';
import { SCENARIO, type Scenario } from '../../../seed/scenario.ts';

const story = SCENARIO.stories.labReadsHigh;
const withBias = generateDemo();
const without = generateDemo(undefined, { ...SCENARIO, stories: { ...SCENARIO.stories, labReadsHigh: { ...story, biasHrc: 0 } } } as Scenario);

describe('a mill laboratory that starts reading high', () => {
  it('raises only the certificates of its supply from its date, by about the planted bias', () => {
    expect(withBias.certificates).toHaveLength(without.certificates.length);
    const shifts: number[] = [];
    withBias.certificates.forEach((c, i) => {
      const o = without.certificates[i]!;
      const inStory = c.mill === story.mill && c.grade === story.grade && c.castDate >= story.from;
      const sameSupply = c.mill === story.mill && c.grade === story.grade;
      if (!inStory && !(sameSupply && c.castDate > story.from)) {
        expect(c).toEqual(o);
        return;
      }
      if (!inStory) return;
      expect(c.tests[0]!.laboratory).toBe(story.laboratory);
      if (JSON.stringify(c.chemistry) !== JSON.stringify(o.chemistry)) return;
      const a = c.tests[0]!.readings.map((r) => r.hrc);
      const b = o.tests[0]!.readings.map((r) => r.hrc);
      shifts.push(a.reduce((s, v, k) => s + v - b[k]!, 0) / a.length);
    });
    expect(shifts.length).toBeGreaterThanOrEqual(10);
    // The whole bias off the quenched-end plateau; the mean over the curve a little less (next test).
    const mean = shifts.reduce((s, v) => s + v, 0) / shifts.length;
    expect(mean).toBeGreaterThan(story.biasHrc - 0.6);
    expect(mean).toBeLessThanOrEqual(story.biasHrc);
  });

  it('reads exactly the bias high below the quenched-end plateau, where the cap at IH(C) + 1 takes some of it off', () => {
    withBias.certificates.forEach((c, i) => {
      if (!(c.mill === story.mill && c.grade === story.grade && c.castDate >= story.from)) return;
      const o = without.certificates[i]!;
      if (JSON.stringify(c.chemistry) !== JSON.stringify(o.chemistry)) return;
      const top = Math.max(...c.tests[0]!.readings.map((r) => r.hrc));
      c.tests[0]!.readings.forEach((r, k) => {
        const d = r.hrc - o.tests[0]!.readings[k]!.hrc;
        // Off the capped plateau the whole bias shows; on it, part or none of it.
        if (r.hrc < top) expect(d).toBeCloseTo(story.biasHrc, 9);
        else {
          expect(d).toBeGreaterThanOrEqual(0);
          expect(d).toBeLessThanOrEqual(story.biasHrc);
        }
      });
    });
  });

  it('leaves the re-tests of every other supply alone and names the paired heats after the date', () => {
    const others = (d: typeof withBias) => d.retests.filter((r) => !(r.mill === story.mill && withBias.certificates.find((c) => c.mill === r.mill && c.heatNumber === r.heatNumber)?.grade === story.grade));
    expect(others(withBias)).toEqual(others(without));
    expect(withBias.stories.labReadsHigh.pairedHeatsAfter.length).toBeGreaterThanOrEqual(4);
    const retested = new Set(withBias.retests.filter((r) => r.mill === story.mill).map((r) => r.heatNumber));
    for (const h of withBias.stories.labReadsHigh.pairedHeatsAfter) expect(retested.has(h)).toBe(true);
  });
});
