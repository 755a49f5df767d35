// Band axis, legend and frame for the small SVG charts of the Workload and Capacity planner screens,
// drawn on the server from d3-scale scales. Text uses the page's ink colours; lines stay thin so the data carries the weight.
import type { ScaleBand } from "d3-scale";
import { plotHeight, plotWidth, type Frame } from "@/app/components/charts/chart-parts";

// The frame and the value and linear axes are those of the metric charts (chart-parts.tsx).
export const defaultFrame: Frame = { width: 680, height: 230, margin: { top: 14, right: 20, bottom: 40, left: 64 } };

/** Horizontal axis for a band scale; `labelEvery` thins the labels when bands are narrow. */
export function BottomBandAxis({ scale, frame, format, label, labelEvery = 1 }: { scale: ScaleBand<string>; frame: Frame; format: (value: string) => string; label: string; labelEvery?: number }) {
  const height = plotHeight(frame);
  return (
    <g aria-hidden transform={`translate(0,${height})`}>
      <line x1={0} x2={plotWidth(frame)} className="stroke-ink-faint" strokeWidth={1} />
      {scale.domain().map((value, index) =>
        index % labelEvery === 0 ? (
          <g key={value} transform={`translate(${(scale(value) ?? 0) + scale.bandwidth() / 2},0)`}>
            <line y2={4} className="stroke-ink-faint" />
            <text y={15} textAnchor="middle" className="fill-ink-soft text-[10px]">
              {format(value)}
            </text>
          </g>
        ) : null,
      )}
      <text x={plotWidth(frame) / 2} y={32} textAnchor="middle" className="fill-ink-soft text-[10px]">
        {label}
      </text>
    </g>
  );
}

/** A legend entry: a swatch (bar or line) and its words. */
export function LegendItem({ kind, className, children }: { kind: "bar" | "line" | "dashed"; className: string; children: React.ReactNode }) {
  return (
    <span className="inline-flex items-center gap-1.5">
      <svg width={18} height={10} aria-hidden>
        {kind === "bar" ? (
          <rect width={18} height={10} className={className} />
        ) : (
          <line x1={0} x2={18} y1={5} y2={5} strokeWidth={2} strokeDasharray={kind === "dashed" ? "4 3" : undefined} className={className} />
        )}
      </svg>
      {children}
    </span>
  );
}

/** A whole number with thousands separators, or a compact form above 10,000 (12.5K). */
export function formatCount(value: number): string {
  return Math.abs(value) >= 10_000
    ? new Intl.NumberFormat("en", { notation: "compact", maximumFractionDigits: 1 }).format(value)
    : new Intl.NumberFormat("en", { maximumFractionDigits: 1 }).format(value);
}
