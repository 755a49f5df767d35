// The shared body of POST /api/v1/alerts, /labels and /outcomes: read the rows, ingest them as one
// batch, answer with the counts. A signed-in supervisor's request is an upload from the Ingest log
// screen; a token's is the API. 200 when the batch committed (also with rejected rows, which the
// answer lists); 422 when an atomic request stored nothing because some row failed.
import "server-only";
import { NextResponse } from "next/server";
import { db } from "@/lib/db/client";
import { AppError } from "@/lib/errors";
import type { ApiClientActor, UserActor } from "@/lib/auth/actor";
import type { AuditContext } from "@/lib/audit/schemas";
import { getSettings } from "@/lib/settings/get-settings";
import { ingestAlerts } from "@/lib/ingest/ingest-alerts";
import { ingestLabels } from "@/lib/ingest/ingest-labels";
import { ingestOutcomes } from "@/lib/ingest/ingest-outcomes";
import type { IngestKind } from "@/lib/ingest/ingest-batch";
import { atomicParameter, readIngestRows } from "@/lib/ingest/read-ingest-request";

export interface AnswerIngestRequestOptions {
  kind: IngestKind;
  actor: UserActor | ApiClientActor;
  context: AuditContext;
  now: Date;
}

const ingestByKind = { alerts: ingestAlerts, labels: ingestLabels, outcomes: ingestOutcomes } as const;

/** `?fileName=` names the uploaded file in the ingest log; only its last path segment is kept. */
function fileNameParameter(url: URL): string | null {
  const value = url.searchParams.get("fileName");
  if (!value) return null;
  return value.split(/[\\/]/).pop()!.slice(0, 200) || null;
}

/** `?firstRow=N`: the index of this request's first row in a larger file, so reported rows point into the file. */
function firstRowParameter(url: URL): number {
  const value = url.searchParams.get("firstRow");
  if (value === null) return 0;
  const number = Number(value);
  if (!Number.isSafeInteger(number) || number < 0) {
    throw new AppError("invalid_input", "firstRow must be a whole number of 0 or more", [{ path: "firstRow", message: "expected a whole number of 0 or more" }]);
  }
  return number;
}

export async function answerIngestRequest(request: Request, options: AnswerIngestRequestOptions): Promise<Response> {
  const url = new URL(request.url);
  const atomic = atomicParameter(url);
  const fileName = fileNameParameter(url);
  const rowOffset = firstRowParameter(url);
  const settings = await getSettings(db());
  const rows = await readIngestRows(request, { kind: options.kind, maxRows: settings.ingest.maxRowsPerRequest });
  const answer = await ingestByKind[options.kind](db(), {
    actor: options.actor,
    rows,
    channel: options.actor.type === "user" ? "upload" : "api",
    atomic,
    fileName,
    rowOffset,
    now: options.now,
    context: options.context,
  });
  return NextResponse.json(answer, { status: answer.rolledBack ? 422 : 200 });
}
