// Errors of the analysis layer, each with a stable code the API maps to an HTTP status.

export type AnalysisErrorCode = 'not_found' | 'insufficient_data' | 'invalid_input' | 'no_band';

export class AnalysisError extends Error {
  override name = 'AnalysisError';
  constructor(
    readonly code: AnalysisErrorCode,
    message: string,
    readonly details?: unknown,
  ) {
    super(message);
  }
}

export const notFound = (message: string) => new AnalysisError('not_found', message);
export const insufficientData = (message: string, details?: unknown) => new AnalysisError('insufficient_data', message, details);
export const invalidInput = (message: string, details?: unknown) => new AnalysisError('invalid_input', message, details);
