// One model version's numbers over the window: volume and outcomes, realized precision over time,
// calibration, discrimination on reviewed alerts, score drift, precision at k, below-the-line samples.
import type { ReactNode } from "react";
import type { ModelVersionMetrics } from "@/lib/feedback/schemas";
import { RateSeriesChart } from "@/app/components/charts/rate-series-chart";
import { ReliabilityChart } from "@/app/components/charts/reliability-chart";
import { DriftChart } from "@/app/components/charts/drift-chart";
import { formatCount, formatCounts, formatDay, formatDecimal, formatInterval, formatPercent } from "@/app/components/metric-format";

function Section({ id, title, children }: { id: string; title: string; children: ReactNode }) {
  return (
    <section aria-labelledby={id} className="space-y-2 border-t border-rule pt-3">
      <h3 id={id} className="text-sm font-semibold">
        {title}
      </h3>
      {children}
    </section>
  );
}

function Fact({ label, value, detail }: { label: string; value: ReactNode; detail?: ReactNode }) {
  return (
    <div className="flex flex-col">
      <dt className="text-2xs font-semibold uppercase tracking-wide text-ink-soft">{label}</dt>
      <dd className="text-lg font-semibold tabular-nums">{value}</dd>
      {detail ? <dd className="text-2xs text-ink-soft">{detail}</dd> : null}
    </div>
  );
}

function sampleNote(sample: { used: number; total: number; sampled: boolean }): string {
  return sample.sampled ? `on a fixed sample of ${formatCount(sample.used)} of ${formatCount(sample.total)} alerts` : `on all ${formatCount(sample.total)} alerts`;
}

export function ModelVersionPanel({
  metrics,
  role,
  window,
}: {
  metrics: ModelVersionMetrics;
  role: "champion" | "challenger" | null;
  window: { from: string; to: string; matureBefore: string; bucket: "day" | "week" };
}) {
  const m = metrics;
  const key = m.modelVersion.id.slice(0, 8);
  const name = `${m.modelVersion.modelName} ${m.modelVersion.version}`;
  const precision = m.realizedPrecision;
  const level = m.drift.level;

  return (
    <article aria-labelledby={`mv-${key}`} className="panel space-y-3 p-3">
      <header className="space-y-0.5">
        <h2 id={`mv-${key}`} className="flex flex-wrap items-baseline gap-2 text-base font-semibold">
          {name}
          {role ? <span className="rounded bg-accent-wash px-1.5 py-0.5 text-2xs font-semibold uppercase tracking-wide text-accent-strong">{role}</span> : null}
          {!m.modelVersion.active ? <span className="text-2xs font-normal text-ink-soft">(retired)</span> : null}
        </h2>
        <p className="text-xs text-ink-soft">
          {m.modelVersion.scoreKind === "probability" ? "Probability scores" : "Anomaly scores"}; alert threshold {m.modelVersion.alertThreshold}.
        </p>
      </header>

      <dl className="grid grid-cols-2 gap-3 sm:grid-cols-4">
        <Fact label="Received" value={formatCount(m.received)} detail="alerts in the window" />
        <Fact label="Closed" value={formatCount(m.closed)} detail={m.received > 0 ? `${formatPercent(m.closed / m.received, 0)} of received` : "—"} />
        <Fact
          label="Realized precision"
          value={formatPercent(precision.value)}
          detail={
            <>
              {formatInterval(precision)} · {formatCounts(precision)}
            </>
          }
        />
        <Fact label={`Precision at k = ${m.precisionAtK.k}`} value={formatPercent(m.precisionAtK.overall.value)} detail={`${formatInterval(m.precisionAtK.overall)} · all days pooled`} />
      </dl>

      <table className="data-table" aria-label={`Outcome mix of ${name}`}>
        <thead>
          <tr>
            <th>Final outcome of closed alerts</th>
            <th className="num">Alerts</th>
            <th className="num">Share</th>
          </tr>
        </thead>
        <tbody>
          {(
            [
              ["Confirmed fraud", m.outcomeMix.confirmedFraud],
              ["Legitimate", m.outcomeMix.legitimate],
              ["Inconclusive", m.outcomeMix.inconclusive],
            ] as const
          ).map(([label, count]) => (
            <tr key={label}>
              <td>{label}</td>
              <td className="num">{formatCount(count)}</td>
              <td className="num">{m.closed > 0 ? formatPercent(count / m.closed) : "—"}</td>
            </tr>
          ))}
          <tr>
            <td className="text-ink-soft">Overturned by a later chargeback or customer report</td>
            <td className="num">{formatCount(m.overturnedByLabel)}</td>
            <td className="num">{m.closed > 0 ? formatPercent(m.overturnedByLabel / m.closed) : "—"}</td>
          </tr>
        </tbody>
      </table>
      <p className="text-xs text-ink-soft">
        Realized precision is fraud ÷ (fraud + legitimate) on the ground truth: the latest chargeback or customer report where one arrived,
        otherwise the analyst&apos;s final outcome. {formatCount(precision.inconclusive)} inconclusive {precision.inconclusive === 1 ? "alert is" : "alerts are"} counted
        apart.
      </p>

      <Section id={`mv-${key}-precision`} title="Realized precision over time">
        <RateSeriesChart
          points={m.series.map((point) => ({ from: point.from, to: point.to, mature: point.mature, rate: point.realizedPrecision }))}
          from={window.from}
          to={window.to}
          matureBefore={window.matureBefore}
          yLabel="realized precision"
          title={`Realized precision of ${name} by ${window.bucket}`}
          caption={`Share of closed alerts that were fraud, by ${window.bucket} of arrival, with 95% Wilson intervals; the dashed line is the whole window. Wide bars mean few outcomes, not a worse model.`}
          reference={precision.value === null ? undefined : { value: precision.value, label: `window ${formatPercent(precision.value)}` }}
        />
      </Section>

      <Section id={`mv-${key}-calibration`} title="Calibration">
        <ReliabilityChart
          bins={m.calibration.bins}
          title={`Calibration curve of ${name}`}
          caption="Points on the diagonal mean the probabilities came true as often as they said; points below it mean the model promised more fraud than was found."
        />
        <dl className="grid grid-cols-3 gap-3">
          <Fact label="Brier score" value={formatDecimal(m.calibration.brierScore)} detail="mean (p − outcome)², lower is better" />
          <Fact label="ECE" value={formatDecimal(m.calibration.expectedCalibrationError)} detail="10 equal-width bins of p" />
          <Fact label="Labelled alerts" value={formatCount(m.calibration.alerts)} detail={`${formatCount(m.calibration.calibratedAlerts)} with a fitted calibration map`} />
        </dl>
        <p className="text-xs text-ink-soft">
          ECE is the binned expected calibration error of Naeini, Cooper &amp; Hauskrecht (2015) on the fraud probability p itself: Σ (alerts in
          bin ÷ all) · |observed rate − mean p|. It is not the top-label variant of Guo et al. (2017), which scores max(p, 1 − p) and gives
          different numbers whenever p &lt; 0.5.
        </p>
      </Section>

      <Section id={`mv-${key}-discrimination`} title="Ranking of fraud above legitimate">
        <dl className="grid grid-cols-3 gap-3">
          <Fact label="ROC AUC" value={formatDecimal(m.discrimination.rocAuc)} detail="0.5 = chance, 1 = perfect" />
          <Fact label="Average precision" value={formatDecimal(m.discrimination.averagePrecision)} detail={`base rate ${formatPercent(m.discrimination.positives + m.discrimination.negatives > 0 ? m.discrimination.positives / (m.discrimination.positives + m.discrimination.negatives) : null)}`} />
          <Fact label="Fraud / legitimate" value={`${formatCount(m.discrimination.positives)} / ${formatCount(m.discrimination.negatives)}`} detail={sampleNote(m.discrimination.sample)} />
        </dl>
        <p className="text-xs font-semibold text-attention">Measured on reviewed alerts only.</p>
        <p className="text-xs text-ink-soft">
          Only alerts above the threshold were reviewed, so these numbers say how well the model orders the alerts it raised, not how well it
          separates all transactions.
        </p>
      </Section>

      <Section id={`mv-${key}-drift`} title="Score drift (population stability index)">
        <DriftChart
          buckets={m.drift.series}
          step={m.drift.step}
          overall={m.drift.psi}
          watchLine={m.drift.watchLine}
          actLine={m.drift.actLine}
          title={`Score drift of ${name}`}
          caption={`Bars under the dashed watch line mean each ${m.drift.step}'s scores are spread like the reference window's; bars past the act line mean the traffic or the model has changed.`}
        />
        <p className="text-xs text-ink-soft">
          Current window {formatDay(m.drift.current.from)} to {formatDay(m.drift.current.to, true)} ({sampleNote(m.drift.current.sample)}) against the reference{" "}
          {formatDay(m.drift.reference.from)} to {formatDay(m.drift.reference.to, true)} ({sampleNote(m.drift.reference.sample)}), 10 bins on the reference deciles. A {m.drift.step} needs 500 scores for a bar of its own: with fewer, PSI&apos;s own sampling noise
          reaches the watch line. PSI{" "}
          <strong className={level === "act" ? "text-overdue" : level === "watch" ? "text-attention" : "text-ink"}>
            {m.drift.psi === null ? "not available (a window has no scores)" : `${m.drift.psi.toFixed(3)} (${level})`}
          </strong>
          . The 0.1 and 0.25 lines are common practice in credit-risk monitoring, not a statistical test.
        </p>
      </Section>

      <Section id={`mv-${key}-topk`} title={`Precision at k = ${m.precisionAtK.k} per day`}>
        <RateSeriesChart
          points={m.precisionAtK.days.map((day) => ({ from: day.from, to: day.to, mature: day.mature, rate: day.precision }))}
          from={window.from}
          to={window.to}
          matureBefore={window.matureBefore}
          yLabel="fraud among the top k"
          title={`Precision at k of ${name}`}
          caption={`Of the ${m.precisionAtK.k} highest-priority alerts of each day (the team's daily capacity), the share that proved fraud; alerts still open count as not fraud.`}
        />
      </Section>

      <Section id={`mv-${key}-below`} title="Below-the-line samples">
        {m.belowTheLine.sampled === 0 ? (
          <p className="text-xs text-ink-soft">No below-the-line samples in this window. The numbers above cover alerts above the threshold only.</p>
        ) : (
          <>
            <dl className="grid grid-cols-3 gap-3">
              <Fact label="Samples" value={formatCount(m.belowTheLine.sampled)} detail={`${formatCount(m.belowTheLine.resolved)} with a ground truth; stand for ${formatCount(Math.round(m.belowTheLine.represents))} transactions`} />
              <Fact label="Fraud below the line" value={formatPercent(m.belowTheLine.weightedFraudRate.value, 2)} detail={`weighted by 1/π; unweighted ${formatPercent(m.belowTheLine.sampleFraudRate.value)} (${formatInterval(m.belowTheLine.sampleFraudRate)})`} />
              <Fact label="Fraud in all scored traffic" value={formatPercent(m.belowTheLine.weightedPopulationFraudRate.value, 2)} detail="alerts weight 1, samples 1/π" />
            </dl>
            <p className="text-xs text-ink-soft">
              Samples are left out of every number above and estimated here with Horvitz–Thompson weights 1/π (Hájek ratio form). Weighted
              estimates carry no Wilson interval: their trials are weights, not counts.
            </p>
          </>
        )}
      </Section>
    </article>
  );
}
