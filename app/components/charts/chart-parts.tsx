// Frame, axes and figure of the metric charts (Model health, Reviewer quality): SVG drawn on the
// server from d3-scale scales, with light grid lines so the data and its intervals carry the weight.
import type { ReactNode } from "react";
import type { ScaleBand, ScaleLinear, ScaleTime } from "d3-scale";

export interface Frame {
  width: number;
  height: number;
  margin: { top: number; right: number; bottom: number; left: number };
}

export const metricFrame: Frame = { width: 560, height: 220, margin: { top: 12, right: 16, bottom: 40, left: 52 } };

export const plotWidth = (frame: Frame) => frame.width - frame.margin.left - frame.margin.right;
export const plotHeight = (frame: Frame) => frame.height - frame.margin.top - frame.margin.bottom;

/** A percentage for axes and labels: 0.425 → "42.5%", or "43%" with digits = 0. */
export function percent(value: number, digits = 1): string {
  return `${(value * 100).toFixed(digits)}%`;
}

/** The chart as a figure: the SVG with a short summary for screen readers, then a one-line caption that says what to see. */
export function ChartFigure({ frame, label, caption, legend, children }: { frame: Frame; label: string; caption: ReactNode; legend?: ReactNode; children: ReactNode }) {
  return (
    <figure className="max-w-[44rem] space-y-1">
      <svg viewBox={`0 0 ${frame.width} ${frame.height}`} className="h-auto w-full" role="img" aria-label={label}>
        <g transform={`translate(${frame.margin.left},${frame.margin.top})`}>{children}</g>
      </svg>
      {legend ? <div className="flex flex-wrap gap-x-4 gap-y-1 text-2xs text-ink-soft">{legend}</div> : null}
      <figcaption className="text-xs text-ink-soft">{caption}</figcaption>
    </figure>
  );
}

/** Value axis on the left, with grid lines across the plot and the axis title turned upright. */
export function ValueAxis({ scale, frame, format, label, ticks = 5 }: { scale: ScaleLinear<number, number>; frame: Frame; format: (value: number) => string; label: string; ticks?: number }) {
  return (
    <g aria-hidden>
      {scale.ticks(ticks).map((tick) => (
        <g key={tick} transform={`translate(0,${scale(tick)})`}>
          <line x1={0} x2={plotWidth(frame)} className="stroke-rule" strokeWidth={tick === 0 ? 1 : 0.5} />
          <text x={-6} dy="0.32em" textAnchor="end" className="fill-ink-soft text-[10px]">
            {format(tick)}
          </text>
        </g>
      ))}
      <text transform={`translate(${-frame.margin.left + 11},${plotHeight(frame) / 2}) rotate(-90)`} textAnchor="middle" className="fill-ink-soft text-[10px]">
        {label}
      </text>
    </g>
  );
}

/** Horizontal axis along the bottom for a linear scale. */
export function LinearAxis({ scale, frame, format, label, ticks = 6 }: { scale: ScaleLinear<number, number>; frame: Frame; format: (value: number) => string; label: string; ticks?: number }) {
  return (
    <g aria-hidden transform={`translate(0,${plotHeight(frame)})`}>
      <line x1={0} x2={plotWidth(frame)} className="stroke-ink-faint" />
      {scale.ticks(ticks).map((tick) => (
        <g key={tick} transform={`translate(${scale(tick)},0)`}>
          <line y2={4} className="stroke-ink-faint" />
          <text y={15} textAnchor="middle" className="fill-ink-soft text-[10px]">
            {format(tick)}
          </text>
        </g>
      ))}
      <text x={plotWidth(frame) / 2} y={32} textAnchor="middle" className="fill-ink-soft text-[10px]">
        {label}
      </text>
    </g>
  );
}

const utcDay = (date: Date) => `${date.toISOString().slice(5, 10)}`;

/** Horizontal axis along the bottom for UTC time, labelled MM-DD. */
export function TimeAxis({ scale, frame, label, ticks = 7 }: { scale: ScaleTime<number, number>; frame: Frame; label: string; ticks?: number }) {
  return (
    <g aria-hidden transform={`translate(0,${plotHeight(frame)})`}>
      <line x1={0} x2={plotWidth(frame)} className="stroke-ink-faint" />
      {scale.ticks(ticks).map((tick) => (
        <g key={tick.getTime()} transform={`translate(${scale(tick)},0)`}>
          <line y2={4} className="stroke-ink-faint" />
          <text y={15} textAnchor="middle" className="fill-ink-soft text-[10px]">
            {utcDay(tick)}
          </text>
        </g>
      ))}
      <text x={plotWidth(frame) / 2} y={32} textAnchor="middle" className="fill-ink-soft text-[10px]">
        {label}
      </text>
    </g>
  );
}

/** Category axis on the left for a band scale (one row per reviewer). */
export function CategoryAxis({ scale, labels }: { scale: ScaleBand<string>; labels: Map<string, string> }) {
  return (
    <g aria-hidden>
      {scale.domain().map((key) => (
        <text key={key} x={-6} y={(scale(key) ?? 0) + scale.bandwidth() / 2} dy="0.32em" textAnchor="end" className="fill-ink text-[10px]">
          {labels.get(key) ?? key}
        </text>
      ))}
    </g>
  );
}

/** A horizontal reference line across the plot with its words at the right end. */
export function ReferenceLine({ y, frame, label, className }: { y: number; frame: Frame; label: string; className: string }) {
  return (
    <g aria-hidden>
      <line x1={0} x2={plotWidth(frame)} y1={y} y2={y} strokeDasharray="5 3" strokeWidth={1.25} className={className} />
      <text x={plotWidth(frame) - 2} y={y - 3} textAnchor="end" className="fill-ink-soft text-[9px]">
        {label}
      </text>
    </g>
  );
}

/** A legend entry: a swatch and its words. */
export function Swatch({ kind, className, children }: { kind: "dot" | "line" | "dashed" | "band"; className: string; children: ReactNode }) {
  return (
    <span className="inline-flex items-center gap-1.5">
      <svg width={18} height={10} aria-hidden>
        {kind === "dot" ? <circle cx={9} cy={5} r={3.5} className={className} /> : null}
        {kind === "band" ? <rect width={18} height={10} className={className} /> : null}
        {kind === "line" || kind === "dashed" ? (
          <line x1={0} x2={18} y1={5} y2={5} strokeWidth={2} strokeDasharray={kind === "dashed" ? "4 3" : undefined} className={className} />
        ) : null}
      </svg>
      {children}
    </span>
  );
}
