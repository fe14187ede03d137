// Error classes for the hardenability domain: every invalid input fails with a plain message.

/** Input that cannot be understood or is physically impossible (negative distance, min > max, ...). */
export class HardenabilityInputError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'HardenabilityInputError';
  }
}

/** A distance label that could be read more than one way (e.g. a bare number without a unit). */
export class AmbiguousDistanceError extends HardenabilityInputError {
  constructor(message: string) {
    super(message);
    this.name = 'AmbiguousDistanceError';
  }
}

/** A published method asked to work outside the domain where its formulas are defined. */
export class OutsideMethodError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'OutsideMethodError';
  }
}

/** A conversion asked for a value outside the rows of its published table. */
export class OutsideTableError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'OutsideTableError';
  }
}
