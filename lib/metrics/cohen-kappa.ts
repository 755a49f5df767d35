/**
 * Cohen's kappa (Cohen 1960) between the first and second outcome of double-reviewed alerts:
 * agreement beyond what two reviewers with the same outcome frequencies would reach by chance,
 * kappa = (p_o − p_e) / (1 − p_e).
 *
 * Returns null when kappa is undefined: no pairs, or chance agreement is already 1 (both reviewers
 * used one and the same outcome throughout), where the ratio is 0/0.
 *
 * `categories`, when given, is the closed set of allowed outcomes; a pair outside it is a data
 * error and throws. (scikit-learn's `labels=` instead drops such pairs silently; we would rather
 * hear about them.) Unused categories do not change unweighted kappa, so listing the full set is safe.
 */
export function cohenKappa(
  pairs: readonly (readonly [string, string])[],
  categories?: readonly string[],
): number | null {
  const allowed = categories === undefined ? null : new Set(categories);
  if (allowed !== null && allowed.size !== categories!.length) {
    throw new RangeError("categories must not contain duplicates");
  }

  const firstCounts = new Map<string, number>();
  const secondCounts = new Map<string, number>();
  let agreements = 0;
  pairs.forEach(([first, second], i) => {
    if (allowed !== null && (!allowed.has(first) || !allowed.has(second))) {
      throw new RangeError(
        `pairs[${i}] = [${first}, ${second}] uses a category outside [${categories!.join(", ")}]`,
      );
    }
    firstCounts.set(first, (firstCounts.get(first) ?? 0) + 1);
    secondCounts.set(second, (secondCounts.get(second) ?? 0) + 1);
    if (first === second) agreements += 1;
  });

  const n = pairs.length;
  if (n === 0) return null;
  const observed = agreements / n;
  let chance = 0;
  for (const [category, count] of firstCounts) {
    chance += (count / n) * ((secondCounts.get(category) ?? 0) / n);
  }
  if (chance >= 1) return null;
  return (observed - chance) / (1 - chance);
}
