/**
 * An input the physics cannot use, with the input it blames (e.g. "period", "mass") so that a form, the API or
 * the command line can put the message at that field.
 */
export class PhysicsInputError extends RangeError {
  override name = "PhysicsInputError";
  constructor(
    readonly field: string,
    message: string,
  ) {
    super(message);
  }
}

export function requireFinite(value: number, name: string): number {
  if (!Number.isFinite(value)) throw new RangeError(`${name} must be a finite number (got ${value})`);
  return value;
}

export function requirePositive(value: number, name: string): number {
  if (!(Number.isFinite(value) && value > 0)) throw new RangeError(`${name} must be a positive number (got ${value})`);
  return value;
}

export function requireNonNegative(value: number, name: string): number {
  if (!(Number.isFinite(value) && value >= 0)) throw new RangeError(`${name} must be zero or positive (got ${value})`);
  return value;
}

export function requirePositiveInteger(value: number, name: string): number {
  if (!(Number.isInteger(value) && value > 0)) throw new RangeError(`${name} must be a positive integer (got ${value})`);
  return value;
}

export function requireFraction(value: number, name: string): number {
  if (!(Number.isFinite(value) && value >= 0 && value <= 1)) {
    throw new RangeError(`${name} must lie between 0 and 1 (got ${value})`);
  }
  return value;
}
