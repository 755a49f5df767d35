// A stable sort of indices by a float64 key, by least-significant-digit radix sort on the key's bit
// pattern. Calibration is fitted on up to millions of labelled alerts; a comparator sort of a
// million indices takes about half a second in V8, a radix sort a few tens of milliseconds, and
// stability is what lets two passes (secondary key, then primary key) order by a pair of keys.

const DIGIT_BITS = 16;
const BUCKETS = 1 << DIGIT_BITS;
const DIGIT_MASK = BUCKETS - 1;
// Typed arrays use the platform's byte order; find which 32-bit half of a float64 holds the sign.
const HIGH_WORD = new Uint8Array(new Uint32Array([1]).buffer)[0] === 1 ? 1 : 0;

/**
 * Returns `indices` reordered so that `values[index]` is non-decreasing; indices with equal values
 * keep their input order. `-0` and `0` count as equal, as they do under `<`. Values must not be NaN.
 */
export function sortIndicesByValueStable(indices: Uint32Array, values: ArrayLike<number>): Uint32Array {
  const n = indices.length;
  let order = indices.slice();
  const gathered = new Float64Array(n);
  // Adding 0 turns -0 into +0, whose bit patterns would otherwise sort apart.
  for (let k = 0; k < n; k++) gathered[k] = values[order[k]] + 0;
  const words = new Uint32Array(gathered.buffer);
  let high = new Uint32Array(n);
  let low = new Uint32Array(n);
  for (let k = 0; k < n; k++) {
    let h = words[2 * k + HIGH_WORD];
    let l = words[2 * k + 1 - HIGH_WORD];
    // IEEE 754 bit patterns order like the numbers once negatives are fully inverted and
    // non-negatives have their sign bit set.
    if (h & 0x80000000) {
      h = ~h >>> 0;
      l = ~l >>> 0;
    } else {
      h = (h | 0x80000000) >>> 0;
    }
    high[k] = h;
    low[k] = l;
  }

  let nextOrder = new Uint32Array(n);
  let nextHigh = new Uint32Array(n);
  let nextLow = new Uint32Array(n);
  const counts = new Uint32Array(BUCKETS);

  for (let pass = 0; pass < 4; pass++) {
    const word = pass < 2 ? low : high;
    const shift = (pass % 2) * DIGIT_BITS;
    counts.fill(0);
    for (let k = 0; k < n; k++) counts[(word[k] >>> shift) & DIGIT_MASK]++;
    // A digit shared by every key cannot change the order; skipping it matters for labels (0/1)
    // and for scores with few significant bits.
    if (n === 0 || counts[(word[0] >>> shift) & DIGIT_MASK] === n) continue;
    let position = 0;
    for (let d = 0; d < BUCKETS; d++) {
      const c = counts[d];
      counts[d] = position;
      position += c;
    }
    for (let k = 0; k < n; k++) {
      const target = counts[(word[k] >>> shift) & DIGIT_MASK]++;
      nextOrder[target] = order[k];
      nextHigh[target] = high[k];
      nextLow[target] = low[k];
    }
    [order, nextOrder] = [nextOrder, order];
    [high, nextHigh] = [nextHigh, high];
    [low, nextLow] = [nextLow, low];
  }
  return order;
}
