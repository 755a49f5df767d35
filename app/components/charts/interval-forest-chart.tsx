// One row per reviewer: their rate with its 95% Wilson interval against the team's rate. A row
// stands out only when its whole interval lies on one side of the team line.
import { scaleBand, scaleLinear } from "d3-scale";
import type { Rate } from "@/lib/metrics";
import { CategoryAxis, ChartFigure, LinearAxis, percent, plotHeight, plotWidth, Swatch, type Frame } from "@/app/components/charts/chart-parts";

export interface ForestRow {
  key: string;
  label: string;
  rate: Rate;
  standsOut: "above" | "below" | null;
}

export function IntervalForestChart({ rows, team, xLabel, title, caption }: { rows: ForestRow[]; team: Rate; xLabel: string; title: string; caption: string }) {
  const frame: Frame = { width: 560, height: 56 + rows.length * 22, margin: { top: 8, right: 16, bottom: 40, left: 120 } };
  const withData = rows.filter((row) => row.rate.trials > 0);
  const right = Math.min(1, Math.max(0.05, team.value ?? 0, ...withData.map((row) => row.rate.upper)) * 1.05);
  const x = scaleLinear().domain([0, right]).nice().range([0, plotWidth(frame)]);
  const y = scaleBand<string>()
    .domain(rows.map((row) => row.key))
    .range([0, plotHeight(frame)])
    .padding(0.35);
  const rowClass = (row: ForestRow) => (row.standsOut === null ? "accent" : "overdue");
  const describe = (row: ForestRow) =>
    row.rate.value === null
      ? `${row.label}: no cases`
      : `${row.label}: ${row.rate.successes} of ${row.rate.trials} = ${percent(row.rate.value)} (95% interval ${percent(row.rate.lower)}–${percent(row.rate.upper)})${row.standsOut ? `, ${row.standsOut} the team` : ""}`;

  return (
    <ChartFigure
      frame={frame}
      label={`${title}: team ${team.value === null ? "no cases" : percent(team.value)}; ${rows.map(describe).join("; ")}.`}
      caption={caption}
      legend={
        <>
          <Swatch kind="line" className="stroke-accent/50">
            reviewer, 95% Wilson interval
          </Swatch>
          <Swatch kind="line" className="stroke-overdue/60">
            interval entirely above or below the team
          </Swatch>
          <Swatch kind="dashed" className="stroke-ink">
            team rate
          </Swatch>
        </>
      }
    >
      <CategoryAxis scale={y} labels={new Map(rows.map((row) => [row.key, row.label]))} />
      {team.value !== null ? <line x1={x(team.value)} x2={x(team.value)} y1={0} y2={plotHeight(frame)} strokeDasharray="5 3" className="stroke-ink" aria-hidden /> : null}
      {withData.map((row) => {
        const cy = (y(row.key) ?? 0) + y.bandwidth() / 2;
        const tone = rowClass(row);
        return (
          <g key={row.key}>
            <title>{describe(row)}</title>
            <line x1={x(row.rate.lower)} x2={x(row.rate.upper)} y1={cy} y2={cy} strokeWidth={4} strokeLinecap="round" className={tone === "accent" ? "stroke-accent/40" : "stroke-overdue/50"} />
            <circle cx={x(row.rate.value!)} cy={cy} r={3.5} className={tone === "accent" ? "fill-accent" : "fill-overdue"} />
          </g>
        );
      })}
      <LinearAxis scale={x} frame={frame} format={(value) => percent(value, 0)} label={xLabel} />
    </ChartFigure>
  );
}
