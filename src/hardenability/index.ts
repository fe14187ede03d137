// Public API of the hardenability domain library (pure functions, no I/O).

export * from './types.ts';
export * from './errors.ts';
export * from './distances.ts';
export * from './bands.ts';
export * from './conformance.ts';
export * from './martensite.ts';
export * from './astmA255.ts';
export * from './just1969.ts';
export { monotoneCurve, requestedDistances, flagChemistry } from './predictedCurve.ts';
export type { ValidityTable } from './predictedCurve.ts';
export * from './hardness.ts';
export * from './e140.ts';
export * from './checks/curveShape.ts';
export * from './checks/martensiteCeiling.ts';
export * from './checks/chemistryLimits.ts';
export * from './checks/copies.ts';
export * from './checks/prediction.ts';
export * from './dataQuality.ts';
