// A small seeded pseudo-random generator (mulberry32) so the demo scenario is the same on
// every machine for the same seed. Not for anything security-related.
export interface Random {
  next(): number;
  int(min: number, maxInclusive: number): number;
  pick<T>(items: readonly T[]): T;
  weighted<T>(items: readonly (readonly [T, number])[]): T;
  normal(): number;
  logNormal(median: number, sigma: number): number;
  chance(p: number): boolean;
}

export function seededRandom(seed: number): Random {
  let state = seed >>> 0;
  const next = () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
  const normal = () => {
    // Box–Muller; 1 - next() avoids log(0).
    const u = 1 - next();
    const v = next();
    return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
  };
  return {
    next,
    int: (min, maxInclusive) => min + Math.floor(next() * (maxInclusive - min + 1)),
    pick: (items) => items[Math.floor(next() * items.length)],
    weighted: (items) => {
      const total = items.reduce((sum, [, weight]) => sum + weight, 0);
      let target = next() * total;
      for (const [item, weight] of items) {
        target -= weight;
        if (target <= 0) return item;
      }
      return items[items.length - 1][0];
    },
    normal,
    logNormal: (median, sigma) => median * Math.exp(sigma * normal()),
    chance: (p) => next() < p,
  };
}
