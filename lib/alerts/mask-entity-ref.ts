// The entity reference (a card token, an account reference) as screens show it: enough to tell two
// apart and to match a phone call (a short prefix such as "tok_" and the last four characters), not
// the whole value. Ingest already refuses card numbers (DESIGN.md §5); this is the second line, and
// keeps to PCI DSS v4.0.1 req. 3.4.1's limit should a masked card form arrive (at most the BIN and
// the last four digits; here never more than the last four).
const MASK = "••••";

export function maskEntityRef(entityRef: string): string {
  const value = entityRef.trim();
  if (value.length <= 4) return `${MASK}${value.slice(-1)}`;
  if (value.length <= 8) return `${MASK}${value.slice(-2)}`;
  // A non-digit prefix up to a separator ("tok_", "acct-") says what kind of reference it is.
  const prefix = /^([A-Za-z]{1,6}[_-])/.exec(value)?.[1] ?? "";
  return `${prefix}${MASK}${value.slice(-4)}`;
}
