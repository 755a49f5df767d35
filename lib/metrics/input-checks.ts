// Shared guards for the metric functions. Metrics feed dashboards that people act on, so a
// malformed input (a negative count, a probability of 1.3, arrays of different lengths) must stop
// loudly with a RangeError that names the argument, never turn silently into a plausible number.

export function assertCount(value: number, name: string): void {
  if (!Number.isInteger(value) || value < 0) {
    throw new RangeError(`${name} must be a non-negative integer, got ${value}`);
  }
}

export function assertNonNegative(value: number, name: string): void {
  if (!Number.isFinite(value) || value < 0) {
    throw new RangeError(`${name} must be a finite number >= 0, got ${value}`);
  }
}

export function assertFinite(value: number, name: string): void {
  if (!Number.isFinite(value)) {
    throw new RangeError(`${name} must be a finite number, got ${value}`);
  }
}

export function assertPositiveInteger(value: number, name: string): void {
  if (!Number.isInteger(value) || value < 1) {
    throw new RangeError(`${name} must be a positive integer, got ${value}`);
  }
}

export function assertSameLength(a: readonly unknown[], b: readonly unknown[], nameA: string, nameB: string): void {
  if (a.length !== b.length) {
    throw new RangeError(`${nameA} and ${nameB} must have the same length, got ${a.length} and ${b.length}`);
  }
}

export function assertProbabilities(values: readonly number[], name: string): void {
  values.forEach((p, i) => {
    if (!Number.isFinite(p) || p < 0 || p > 1) {
      throw new RangeError(`${name}[${i}] must be a probability in [0, 1], got ${p}`);
    }
  });
}

export function assertFiniteValues(values: readonly number[], name: string): void {
  values.forEach((v, i) => {
    if (!Number.isFinite(v)) {
      throw new RangeError(`${name}[${i}] must be a finite number, got ${v}`);
    }
  });
}

/** Labels are the 0/1 outcome of a reviewed alert: 1 = confirmed_fraud, 0 = legitimate. */
export function assertBinaryLabels(values: readonly number[], name: string): void {
  values.forEach((y, i) => {
    if (y !== 0 && y !== 1) {
      throw new RangeError(`${name}[${i}] must be 0 or 1, got ${y}`);
    }
  });
}
