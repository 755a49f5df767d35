// Score drift: the population stability index of each day's scores against the reference window,
// with the 0.1 and 0.25 lines that credit-risk teams commonly use to watch and to act.
import { scaleBand, scaleLinear } from "d3-scale";
import { ChartFigure, metricFrame, plotHeight, plotWidth, ReferenceLine, Swatch, ValueAxis } from "@/app/components/charts/chart-parts";

export interface DriftBucket {
  from: string;
  scores: number;
  psi: number | null;
}

export function DriftChart({
  buckets: days,
  step,
  overall,
  watchLine,
  actLine,
  title,
  caption,
}: {
  buckets: DriftBucket[];
  step: "day" | "week";
  overall: number | null;
  watchLine: number;
  actLine: number;
  title: string;
  caption: string;
}) {
  const frame = metricFrame;
  const x = scaleBand<string>()
    .domain(days.map((day) => day.from))
    .range([0, plotWidth(frame)])
    .paddingInner(0.2);
  const top = Math.max(actLine * 1.4, overall ?? 0, ...days.map((day) => day.psi ?? 0));
  const y = scaleLinear().domain([0, top]).nice().range([plotHeight(frame), 0]);
  const levelClass = (psi: number) => (psi >= actLine ? "fill-overdue" : psi >= watchLine ? "fill-attention" : "fill-accent");
  const labelEvery = Math.max(1, Math.ceil(days.length / 8));

  return (
    <ChartFigure
      frame={frame}
      label={`${title}: overall PSI ${overall === null ? "not available" : overall.toFixed(3)}; ${days
        .filter((day) => day.psi !== null)
        .map((day) => `${day.from.slice(5, 10)} ${day.psi!.toFixed(3)} (${day.scores} scores)`)
        .join("; ")}.`}
      caption={caption}
      legend={
        <>
          <Swatch kind="band" className="fill-accent">
            PSI of the {step}
          </Swatch>
          {overall !== null ? (
            <Swatch kind="line" className="stroke-ink">
              whole current window
            </Swatch>
          ) : null}
          <Swatch kind="dashed" className="stroke-attention">
            {watchLine} watch · {actLine} act (common practice, not a standard)
          </Swatch>
          <span>· a {step} with too few scores for its own PSI</span>
        </>
      }
    >
      <ValueAxis scale={y} frame={frame} format={(value) => value.toFixed(2)} label="PSI" />
      <ReferenceLine y={y(watchLine)} frame={frame} label={`watch ${watchLine}`} className="stroke-attention" />
      <ReferenceLine y={y(actLine)} frame={frame} label={`act ${actLine}`} className="stroke-overdue" />
      {days.map((day) =>
        day.psi === null ? (
          day.scores > 0 ? (
            <text key={day.from} x={(x(day.from) ?? 0) + x.bandwidth() / 2} y={plotHeight(frame) - 4} textAnchor="middle" className="fill-ink-faint text-[9px]">
              <title>{`${day.from.slice(0, 10)}: only ${day.scores} scores, too few for a PSI of its own`}</title>
              ·
            </text>
          ) : null
        ) : (
          <rect key={day.from} x={x(day.from)} y={y(day.psi)} width={x.bandwidth()} height={plotHeight(frame) - y(day.psi)} className={levelClass(day.psi)}>
            <title>{`${day.from.slice(0, 10)}: PSI ${day.psi.toFixed(3)} from ${day.scores} scores`}</title>
          </rect>
        ),
      )}
      {overall !== null ? <line x1={0} x2={plotWidth(frame)} y1={y(overall)} y2={y(overall)} strokeWidth={1.5} className="stroke-ink" aria-hidden /> : null}
      <g aria-hidden transform={`translate(0,${plotHeight(frame)})`}>
        <line x1={0} x2={plotWidth(frame)} className="stroke-ink-faint" />
        {days.map((day, index) =>
          index % labelEvery === 0 ? (
            <text key={day.from} x={(x(day.from) ?? 0) + x.bandwidth() / 2} y={15} textAnchor="middle" className="fill-ink-soft text-[10px]">
              {day.from.slice(5, 10)}
            </text>
          ) : null,
        )}
        <text x={plotWidth(frame) / 2} y={32} textAnchor="middle" className="fill-ink-soft text-[10px]">
          {step === "day" ? "arrival day" : "first day of each 7-day block"} in the current window (UTC)
        </text>
      </g>
    </ChartFigure>
  );
}
