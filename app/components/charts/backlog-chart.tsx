// Arrived versus closed alerts per day, with the open backlog at each day's end: is the desk keeping up?
import { scaleBand, scaleLinear } from "d3-scale";
import { plotHeight, plotWidth, ValueAxis } from "@/app/components/charts/chart-parts";
import { BottomBandAxis, defaultFrame, formatCount, LegendItem } from "@/app/components/charts/workload-axes";

export interface BacklogDay {
  day: string;
  arrived: number;
  closed: number;
  openAtEnd: number;
}

export function BacklogChart({ history }: { history: BacklogDay[] }) {
  const frame = defaultFrame;
  const width = plotWidth(frame);
  const height = plotHeight(frame);
  const x = scaleBand<string>()
    .domain(history.map((entry) => entry.day))
    .range([0, width])
    .paddingInner(0.25)
    .paddingOuter(0.1);
  const top = Math.max(1, ...history.map((entry) => Math.max(entry.arrived, entry.closed, entry.openAtEnd)));
  const y = scaleLinear().domain([0, top]).nice().range([height, 0]);
  const bar = x.bandwidth() / 2;
  const line = history.map((entry, i) => `${i === 0 ? "M" : "L"}${(x(entry.day) ?? 0) + x.bandwidth() / 2},${y(entry.openAtEnd)}`).join("");
  const totals = history.reduce((sum, entry) => ({ arrived: sum.arrived + entry.arrived, closed: sum.closed + entry.closed }), { arrived: 0, closed: 0 });
  const last = history.at(-1);
  const first = history[0];
  const change = last && first ? last.openAtEnd - (first.openAtEnd - first.arrived + first.closed) : 0;

  return (
    <figure className="space-y-1">
      <svg
        viewBox={`0 0 ${frame.width} ${frame.height}`}
        className="h-auto w-full"
        role="img"
        aria-label={`Alerts arrived and closed per day over ${history.length} days: ${totals.arrived} arrived, ${totals.closed} closed; ${last?.openAtEnd ?? 0} open now.`}
      >
        <g transform={`translate(${frame.margin.left},${frame.margin.top})`}>
          <ValueAxis scale={y} frame={frame} format={formatCount} label="alerts" />
          {history.map((entry) => (
            <g key={entry.day} transform={`translate(${x(entry.day) ?? 0},0)`}>
              <rect x={0} y={y(entry.arrived)} width={bar} height={height - y(entry.arrived)} className="fill-accent">
                <title>{`${entry.day}: ${entry.arrived} arrived`}</title>
              </rect>
              <rect x={bar} y={y(entry.closed)} width={bar} height={height - y(entry.closed)} className="fill-ink-faint">
                <title>{`${entry.day}: ${entry.closed} closed`}</title>
              </rect>
            </g>
          ))}
          <path d={line} fill="none" strokeWidth={2} className="stroke-attention" />
          {history.map((entry) => (
            <circle key={entry.day} cx={(x(entry.day) ?? 0) + x.bandwidth() / 2} cy={y(entry.openAtEnd)} r={2.5} className="fill-attention">
              <title>{`${entry.day}: ${entry.openAtEnd} open at the end of the day`}</title>
            </circle>
          ))}
          <BottomBandAxis scale={x} frame={frame} format={(day) => day.slice(5)} label="day (UTC, month-day)" labelEvery={history.length > 21 ? 3 : history.length > 14 ? 2 : 1} />
        </g>
      </svg>
      <figcaption className="flex flex-wrap items-center gap-x-4 gap-y-1 text-xs text-ink-soft">
        <LegendItem kind="bar" className="fill-accent">
          arrived
        </LegendItem>
        <LegendItem kind="bar" className="fill-ink-faint">
          closed
        </LegendItem>
        <LegendItem kind="line" className="stroke-attention">
          open at the day&apos;s end
        </LegendItem>
        <span>
          Where the teal bar stands above the grey one the backlog grew that day; over these {history.length} days it{" "}
          {change > 0 ? `grew by ${change}` : change < 0 ? `shrank by ${-change}` : "held steady"}.
        </span>
      </figcaption>
    </figure>
  );
}
