// The start-up log line of a demo load holds counts only, however many heats the stories name.
import { describe, expect, test } from 'vitest';
import { demoCounts } from '../../src/server.ts';

describe('demo start-up log', () => {
  test('counts, not lists of heats', () => {
    const heatNumbers = Array.from({ length: 400 }, (_, i) => `S${String(i).padStart(6, '0')}`);
    const summary = {
      seed: 1, mills: 3, grades: 4, bandsAdded: 5, certificates: 1800, heatsCreated: 1800, retests: 120, testsAdded: 1920, readingsAdded: 21000,
      importIds: Array.from({ length: 50 }, (_, i) => i + 1), models: 9, elapsedMs: 61234,
      stories: { a: { heatNumbers }, b: {}, c: {} },
    };
    const counts = demoCounts(summary as never);
    expect(counts).toEqual({ mills: 3, grades: 4, heats: 1800, retests: 120, readings: 21000, models: 9, stories: 3, seconds: 61.2 });
    expect(JSON.stringify(counts)).not.toContain('S000001');
  });
});
