// Quench computations: heat conduction in the end-quench specimen and in long round bars, equivalence
// of a bar location with an end-quench distance, Grossmann's critical diameter. Sources in each file.
export * from './materials.ts';
export * from './conduction.ts';
export * from './severity.ts';
export * from './cooling.ts';
export * from './equivalence.ts';
export { meanRate85, lambdaOf } from './coolingParameter.ts';
