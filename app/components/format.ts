// Display helpers shared by the screens. Money is stored in integer minor units (ISO 4217).

const minorDigitsCache = new Map<string, number>();

function minorDigits(currency: string): number {
  let digits = minorDigitsCache.get(currency);
  if (digits === undefined) {
    try {
      digits = new Intl.NumberFormat("en", { style: "currency", currency }).resolvedOptions().maximumFractionDigits ?? 2;
    } catch {
      digits = 2;
    }
    minorDigitsCache.set(currency, digits);
  }
  return digits;
}

export function formatMoney(minor: number | bigint | null | undefined, currency: string): string {
  if (minor === null || minor === undefined) return "—";
  const digits = minorDigits(currency);
  const major = Number(minor) / 10 ** digits;
  return new Intl.NumberFormat("en", { style: "currency", currency, minimumFractionDigits: digits, maximumFractionDigits: digits }).format(major);
}

export function formatProbability(p: number | null | undefined): string {
  if (p === null || p === undefined) return "—";
  if (p < 0.001 && p > 0) return "<0.1%";
  return `${(p * 100).toFixed(1)}%`;
}

export function formatDuration(ms: number): string {
  const sign = ms < 0 ? "-" : "";
  const minutes = Math.round(Math.abs(ms) / 60_000);
  if (minutes < 60) return `${sign}${minutes} min`;
  const hours = Math.floor(minutes / 60);
  if (hours < 48) return `${sign}${hours} h ${minutes % 60} min`;
  return `${sign}${Math.floor(hours / 24)} d ${hours % 24} h`;
}

export function formatUtc(date: Date): string {
  return `${date.toISOString().slice(0, 16).replace("T", " ")} UTC`;
}
