import { expect, test } from 'vitest';
import * as stats from '../../../src/stats/index.ts';

test('the library entry exports every family without name clashes', () => {
  // A clash between `export *` modules silently drops the name; these must all be present.
  for (const name of ['capability', 'individualsChart', 'nelsonRules', 'ewmaChart', 'cusumChart', 'estimateIndividualsLimits', 'hotellingT2PhaseOne', 'fitOls', 'fitRidge', 'crossValidate', 'isotonicRegression', 'monotoneCubic', 'createRng', 'shewhartConstants', 'andersonDarling', 'normalCdf', 'clopperPearson', 'bootstrapPercentile', 'boxCoxFit', 'judgeNormality', 'johnsonFit', 'nelderMead', 'chiSquareDeviate', 'supplyNonconforming', 'twoSidedToleranceFactor']) {
    expect(typeof (stats as Record<string, unknown>)[name], name).toBe('function');
  }
});
