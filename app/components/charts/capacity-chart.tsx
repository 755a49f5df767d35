// Expected loss caught a day against review capacity for one model version: with the threshold set for
// each capacity, and today's queue worked by expected loss or by score.
import { scaleLinear } from "d3-scale";
import { LinearAxis, plotHeight, plotWidth, ValueAxis } from "@/app/components/charts/chart-parts";
import { defaultFrame, formatCount, LegendItem } from "@/app/components/charts/workload-axes";

export interface CapacityCurvePoint {
  capacityPerDay: number;
  thresholdForCapacityMinor: number;
  queueByScoreMinor: number;
  queueByExpectedLossMinor: number;
}

function compactMoney(minor: number, currency: string): string {
  let digits = 2;
  try {
    digits = new Intl.NumberFormat("en", { style: "currency", currency }).resolvedOptions().maximumFractionDigits ?? 2;
  } catch {
    // an unknown code: show two decimals' worth
  }
  const major = minor / 10 ** digits;
  try {
    return new Intl.NumberFormat("en", { style: "currency", currency, notation: "compact", maximumFractionDigits: 1 }).format(major);
  } catch {
    return `${formatCount(major)} ${currency}`;
  }
}

export function CapacityChart({
  curve,
  capacityPerDay,
  queuePerDay,
  currency,
  title,
}: {
  curve: CapacityCurvePoint[];
  capacityPerDay: number;
  queuePerDay: number;
  currency: string;
  title: string;
}) {
  const frame = { ...defaultFrame, height: 240 };
  const width = plotWidth(frame);
  const height = plotHeight(frame);
  const maxCapacity = Math.max(1, ...curve.map((point) => point.capacityPerDay));
  const x = scaleLinear().domain([0, maxCapacity]).range([0, width]);
  const top = Math.max(1, ...curve.map((point) => Math.max(point.thresholdForCapacityMinor, point.queueByExpectedLossMinor, point.queueByScoreMinor)));
  const y = scaleLinear().domain([0, top]).nice().range([height, 0]);
  const path = (value: (point: CapacityCurvePoint) => number) => curve.map((point, i) => `${i === 0 ? "M" : "L"}${x(point.capacityPerDay)},${y(value(point))}`).join("");
  const atK = curve.find((point) => point.capacityPerDay === capacityPerDay);
  const marker = (value: number, label: string, className: string) =>
    value >= 0 && value <= maxCapacity ? (
      <g transform={`translate(${x(value)},0)`}>
        <line y1={0} y2={height} strokeDasharray="2 3" className={className} />
        <text y={-4} textAnchor={x(value) > width - 60 ? "end" : x(value) < 60 ? "start" : "middle"} className="fill-ink-soft text-[10px]">
          {label}
        </text>
      </g>
    ) : null;

  return (
    <figure className="space-y-1">
      <svg
        viewBox={`0 0 ${frame.width} ${frame.height}`}
        className="h-auto w-full"
        role="img"
        aria-label={`${title}: expected loss caught a day against capacity.${atK ? ` At ${capacityPerDay} a day: ${compactMoney(atK.queueByExpectedLossMinor, currency)} working today's queue by expected loss, ${compactMoney(atK.queueByScoreMinor, currency)} by score.` : ""}`}
      >
        <g transform={`translate(${frame.margin.left},${frame.margin.top + 6})`}>
          <ValueAxis scale={y} frame={{ ...frame, height: frame.height - 6 }} format={(value) => compactMoney(value, currency)} label={`expected loss caught a day (${currency})`} />
          <path d={path((point) => point.queueByScoreMinor)} fill="none" strokeWidth={1.5} className="stroke-ink-faint" />
          <path d={path((point) => point.queueByExpectedLossMinor)} fill="none" strokeWidth={2} strokeDasharray="5 3" className="stroke-attention" />
          <path d={path((point) => point.thresholdForCapacityMinor)} fill="none" strokeWidth={2} className="stroke-accent" />
          {marker(queuePerDay, `alerts today ${formatCount(Math.round(queuePerDay))}`, "stroke-ink-faint")}
          {marker(capacityPerDay, `K ${formatCount(capacityPerDay)}`, "stroke-ink")}
          <LinearAxis scale={x} frame={{ ...frame, height: frame.height - 6 }} format={formatCount} label="review capacity (alerts a day)" />
        </g>
      </svg>
      <figcaption className="flex flex-wrap items-center gap-x-4 gap-y-1 text-xs text-ink-soft">
        <LegendItem kind="line" className="stroke-accent">
          threshold set for the capacity (by score)
        </LegendItem>
        <LegendItem kind="dashed" className="stroke-attention">
          today&apos;s queue by expected loss
        </LegendItem>
        <LegendItem kind="line" className="stroke-ink-faint">
          today&apos;s queue by score
        </LegendItem>
        <span>
          Left of “alerts today” the queue is longer than the capacity and the gap between the dashed and grey lines is what ordering by money
          at stake adds; right of it only a lower threshold adds more.
        </span>
      </figcaption>
    </figure>
  );
}
