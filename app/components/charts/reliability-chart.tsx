// Calibration curve: the observed fraud rate in each bin of predicted probability against the
// diagonal a perfectly calibrated model would follow, each bin with its 95% Wilson interval.
import { scaleLinear, scaleSqrt } from "d3-scale";
import { rate, type ReliabilityBin } from "@/lib/metrics";
import { ChartFigure, LinearAxis, metricFrame, percent, plotHeight, plotWidth, Swatch, ValueAxis } from "@/app/components/charts/chart-parts";

export function ReliabilityChart({ bins, title, caption }: { bins: ReliabilityBin[]; title: string; caption: string }) {
  const frame = { ...metricFrame, height: 260 };
  const x = scaleLinear().domain([0, 1]).range([0, plotWidth(frame)]);
  const y = scaleLinear().domain([0, 1]).range([plotHeight(frame), 0]);
  const filled = bins.filter((bin) => bin.n > 0);
  const radius = scaleSqrt()
    .domain([0, Math.max(1, ...filled.map((bin) => bin.n))])
    .range([2, 8]);
  const line = filled.map((bin, i) => `${i === 0 ? "M" : "L"}${x(bin.meanPredicted!)},${y(bin.observedRate!)}`).join("");
  const describe = (bin: ReliabilityBin) => {
    const interval = rate(Math.round(bin.observedRate! * bin.n), bin.n);
    return `p in (${bin.lower.toFixed(1)}, ${bin.upper.toFixed(1)}]: ${bin.n} alerts, mean p ${percent(bin.meanPredicted!)}, observed ${percent(bin.observedRate!)} (95% interval ${percent(interval.lower)}–${percent(interval.upper)})`;
  };

  return (
    <ChartFigure
      frame={frame}
      label={`${title}: ${filled.map(describe).join("; ") || "no labelled alerts"}.`}
      caption={caption}
      legend={
        <>
          <Swatch kind="dot" className="fill-accent">
            bin (area ∝ alerts)
          </Swatch>
          <Swatch kind="line" className="stroke-accent/40">
            95% Wilson interval
          </Swatch>
          <Swatch kind="dashed" className="stroke-ink-faint">
            perfect calibration
          </Swatch>
        </>
      }
    >
      <ValueAxis scale={y} frame={frame} format={(value) => percent(value, 0)} label="observed fraud rate" />
      <line x1={x(0)} y1={y(0)} x2={x(1)} y2={y(1)} strokeDasharray="5 3" className="stroke-ink-faint" aria-hidden />
      <path d={line} fill="none" strokeWidth={1} className="stroke-accent/60" />
      {filled.map((bin) => {
        const interval = rate(Math.round(bin.observedRate! * bin.n), bin.n);
        const cx = x(bin.meanPredicted!);
        return (
          <g key={bin.lower}>
            <title>{describe(bin)}</title>
            <line x1={cx} x2={cx} y1={y(interval.lower)} y2={y(interval.upper)} strokeWidth={3} strokeLinecap="round" className="stroke-accent/30" />
            <circle cx={cx} cy={y(bin.observedRate!)} r={radius(bin.n)} className="fill-accent/80" />
          </g>
        );
      })}
      <LinearAxis scale={x} frame={frame} format={(value) => percent(value, 0)} label="predicted probability p (mean in bin)" />
    </ChartFigure>
  );
}
