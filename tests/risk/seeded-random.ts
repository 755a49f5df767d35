// Deterministic pseudo-random numbers for property tests, so a failure reproduces exactly.
// mulberry32 (a widely used 32-bit generator; constants from memory). Statistical quality is
// irrelevant here; only repeatability and spread over [0, 1) matter.
export function seededRandom(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Uniform in the open interval (lo, hi): endpoints excluded so divisions stay well defined. */
export function uniformOpen(random: () => number, lo: number, hi: number): number {
  let u = random();
  while (u === 0) u = random();
  return lo + (hi - lo) * u;
}

export function shuffled<T>(items: readonly T[], random: () => number): T[] {
  const copy = [...items];
  for (let i = copy.length - 1; i > 0; i--) {
    const j = Math.floor(random() * (i + 1));
    [copy[i], copy[j]] = [copy[j], copy[i]];
  }
  return copy;
}
