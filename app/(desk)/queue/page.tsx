import type { Metadata } from "next";
import { db } from "@/lib/db/client";
import { listWaitingAlerts } from "@/lib/queue/list-waiting-alerts";
import { formatDuration, formatMoney, formatProbability } from "@/app/components/format";
import { requirePagePermission } from "@/lib/auth/current-user";
import { NotAllowed } from "@/app/components/not-allowed";

export const metadata: Metadata = { title: "Queue" };
export const dynamic = "force-dynamic";

export default async function QueuePage() {
  const access = await requirePagePermission("queue.view");
  if (!access.allowed) return <NotAllowed role={access.user.role} />;
  const now = new Date();
  const alerts = await listWaitingAlerts(db(), { now, limit: 50 });
  return (
    <section aria-labelledby="queue-heading" className="space-y-3">
      <h1 id="queue-heading" className="text-lg font-semibold">
        Queue
      </h1>
      {alerts.length === 0 ? (
        <p className="text-sm text-ink-soft">No alerts are waiting.</p>
      ) : (
        <div className="panel overflow-x-auto">
          <table className="data-table" aria-label="Waiting alerts in priority order">
            <thead>
              <tr>
                <th>Alert</th>
                <th>Model version</th>
                <th className="num">Score</th>
                <th className="num">Probability</th>
                <th className="num">Amount</th>
                <th className="num">Exposure</th>
                <th className="num">Expected loss</th>
                <th className="num">Due</th>
              </tr>
            </thead>
            <tbody>
              {alerts.map((alert) => (
                <tr key={alert.id}>
                  <td className="font-mono text-xs">{alert.externalId}</td>
                  <td>
                    {alert.modelName} {alert.modelVersion}
                  </td>
                  <td className="num">{alert.score.toFixed(3)}</td>
                  <td className="num">
                    {formatProbability(alert.probability)}
                    {!alert.calibrated && <span title="Not calibrated yet"> *</span>}
                  </td>
                  <td className="num">{formatMoney(alert.amountMinor, alert.currency)}</td>
                  <td className="num">{formatMoney(alert.exposureMinor, alert.currency)}</td>
                  <td className="num">{formatMoney(alert.expectedLossMinor, alert.currency)}</td>
                  <td className={`num ${alert.overdue ? "text-overdue font-semibold" : ""}`}>
                    {alert.dueAt ? (alert.overdue ? `overdue ${formatDuration(now.getTime() - alert.dueAt.getTime())}` : `in ${formatDuration(alert.dueAt.getTime() - now.getTime())}`) : "—"}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
    </section>
  );
}
