// How old the open alerts are, hour by hour, with the ones past their due time apart.
import { scaleBand, scaleLinear } from "d3-scale";
import { plotHeight, plotWidth, ValueAxis } from "@/app/components/charts/chart-parts";
import { BottomBandAxis, defaultFrame, formatCount, LegendItem } from "@/app/components/charts/workload-axes";

export interface AgeBin {
  fromHours: number;
  toHours: number | null;
  notOverdue: number;
  overdue: number;
}

export function AgeChart({ bins }: { bins: AgeBin[] }) {
  const frame = defaultFrame;
  const width = plotWidth(frame);
  const height = plotHeight(frame);
  const key = (bin: AgeBin) => String(bin.fromHours);
  const x = scaleBand<string>().domain(bins.map(key)).range([0, width]).paddingInner(0.15);
  const top = Math.max(1, ...bins.map((bin) => bin.notOverdue + bin.overdue));
  const y = scaleLinear().domain([0, top]).nice().range([height, 0]);
  const open = bins.reduce((sum, bin) => sum + bin.notOverdue + bin.overdue, 0);
  const overdue = bins.reduce((sum, bin) => sum + bin.overdue, 0);
  const last = bins.at(-1);
  const oldest = last ? last.notOverdue + last.overdue : 0;

  return (
    <figure className="space-y-1">
      <svg viewBox={`0 0 ${frame.width} ${frame.height}`} className="h-auto w-full" role="img" aria-label={`Age of the ${open} open alerts by hour; ${overdue} are past their due time.`}>
        <g transform={`translate(${frame.margin.left},${frame.margin.top})`}>
          <ValueAxis scale={y} frame={frame} format={formatCount} label="open alerts" />
          {bins.map((bin) => {
            const left = x(key(bin)) ?? 0;
            const label = bin.toHours === null ? `${bin.fromHours} h or older` : `${bin.fromHours}–${bin.toHours} h`;
            return (
              <g key={key(bin)}>
                <rect x={left} y={y(bin.notOverdue)} width={x.bandwidth()} height={height - y(bin.notOverdue)} className="fill-accent">
                  <title>{`${label}: ${bin.notOverdue} not yet due`}</title>
                </rect>
                <rect x={left} y={y(bin.notOverdue + bin.overdue)} width={x.bandwidth()} height={y(bin.notOverdue) - y(bin.notOverdue + bin.overdue)} className="fill-overdue">
                  <title>{`${label}: ${bin.overdue} overdue`}</title>
                </rect>
              </g>
            );
          })}
          <BottomBandAxis
            scale={x}
            frame={frame}
            format={(value) => (last && value === key(last) && last.toHours === null ? `${value}+` : value)}
            label="age in hours since arrival (last bar: older)"
            labelEvery={6}
          />
        </g>
      </svg>
      <figcaption className="flex flex-wrap items-center gap-x-4 gap-y-1 text-xs text-ink-soft">
        <LegendItem kind="bar" className="fill-accent">
          not yet due
        </LegendItem>
        <LegendItem kind="bar" className="fill-overdue">
          past due
        </LegendItem>
        <span>
          Red shows alerts already past their due time; {oldest > 0 ? `${oldest} open alert${oldest === 1 ? " is" : "s are"} ${last?.fromHours} hours old or older.` : `no open alert is ${last?.fromHours ?? 0} hours old or older.`}
        </span>
      </figcaption>
    </figure>
  );
}
