// A rate over time, one point per bucket with its 95% Wilson interval: realized precision by day or
// week, precision at k by day. Buckets whose labels are not mature yet sit on a shaded band.
import { scaleLinear, scaleUtc } from "d3-scale";
import type { Rate } from "@/lib/metrics";
import { ChartFigure, metricFrame, percent, plotHeight, plotWidth, ReferenceLine, Swatch, TimeAxis, ValueAxis } from "@/app/components/charts/chart-parts";

export interface RatePoint {
  from: string;
  to: string;
  mature: boolean;
  rate: Rate;
}

function intervalText(rate: Rate): string {
  return rate.value === null
    ? "no outcomes"
    : `${rate.successes} of ${rate.trials} = ${percent(rate.value)} (95% interval ${percent(rate.lower)}–${percent(rate.upper)})`;
}

export function RateSeriesChart({
  points,
  from,
  to,
  matureBefore,
  yLabel,
  title,
  caption,
  reference,
}: {
  points: RatePoint[];
  from: string;
  to: string;
  matureBefore: string;
  yLabel: string;
  title: string;
  caption: string;
  reference?: { value: number; label: string };
}) {
  const frame = metricFrame;
  const x = scaleUtc().domain([new Date(from), new Date(to)]).range([0, plotWidth(frame)]);
  const y = scaleLinear().domain([0, 1]).range([plotHeight(frame), 0]);
  const shown = points.filter((point) => point.rate.trials > 0);
  const middle = (point: RatePoint) => x(new Date((new Date(point.from).getTime() + new Date(point.to).getTime()) / 2));
  const line = shown.map((point, i) => `${i === 0 ? "M" : "L"}${middle(point)},${y(point.rate.value!)}`).join("");
  const immatureFrom = Math.max(new Date(matureBefore).getTime(), new Date(from).getTime());
  const hasImmature = immatureFrom < new Date(to).getTime();
  const label = `${title}: ${shown.length} of ${points.length} periods have outcomes; ${shown
    .slice(0, 12)
    .map((point) => `${point.from.slice(5, 10)} ${intervalText(point.rate)}`)
    .join("; ")}${shown.length > 12 ? "; …" : ""}.`;

  return (
    <ChartFigure
      frame={frame}
      label={label}
      caption={caption}
      legend={
        <>
          <Swatch kind="dot" className="fill-accent">
            rate
          </Swatch>
          <Swatch kind="line" className="stroke-accent/40">
            95% Wilson interval
          </Swatch>
          {hasImmature ? (
            <Swatch kind="band" className="fill-attention-wash">
              labels not mature yet
            </Swatch>
          ) : null}
        </>
      }
    >
      {hasImmature ? <rect x={x(new Date(immatureFrom))} y={0} width={plotWidth(frame) - x(new Date(immatureFrom))} height={plotHeight(frame)} className="fill-attention-wash" /> : null}
      <ValueAxis scale={y} frame={frame} format={(value) => percent(value, 0)} label={yLabel} />
      {reference ? <ReferenceLine y={y(reference.value)} frame={frame} label={reference.label} className="stroke-ink-faint" /> : null}
      <path d={line} fill="none" strokeWidth={1} className="stroke-accent/50" />
      {shown.map((point) => {
        const cx = middle(point);
        return (
          <g key={point.from}>
            <title>{`${point.from.slice(0, 10)} to ${point.to.slice(0, 10)}: ${intervalText(point.rate)}${point.mature ? "" : "; labels not mature yet"}`}</title>
            <line x1={cx} x2={cx} y1={y(point.rate.lower)} y2={y(point.rate.upper)} strokeWidth={3} strokeLinecap="round" className="stroke-accent/40" />
            <circle cx={cx} cy={y(point.rate.value!)} r={3} className={point.mature ? "fill-accent" : "fill-panel stroke-accent"} strokeWidth={1.5} />
          </g>
        );
      })}
      <TimeAxis scale={x} frame={frame} label="arrival day (UTC)" />
    </ChartFigure>
  );
}
