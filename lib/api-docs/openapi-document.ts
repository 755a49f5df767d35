// The OpenAPI 3.1 description of /api/v1, generated from the same zod schemas that validate the
// requests and from the route registry that decides access, so the document cannot drift from
// what the handlers accept. Served at GET /api/v1/openapi.json.
import { z } from "zod";
import { alertRowSchema, labelRowSchema, modelVersionInputSchema, outcomeRowSchema } from "@/lib/ingest/schemas";
import { apiRouteAccess } from "@/lib/http/route-registry";
import { modelVersionMetricsAnswerSchema, reviewerMetricsAnswerSchema } from "@/lib/feedback/schemas";
import type { ApiRouteAccess } from "@/lib/http/route-access";

type JsonSchema = Record<string, unknown>;

function schemaOf(schema: z.ZodType): JsonSchema {
  const json = z.toJSONSchema(schema, { io: "input", unrepresentable: "any" }) as JsonSchema;
  delete json.$schema;
  return json;
}

const rateSchema: JsonSchema = {
  type: "object",
  description: "A rate with its 95% Wilson score interval (Wilson 1927) of successes out of trials; value is null when trials = 0.",
  properties: {
    value: { type: ["number", "null"] },
    lower: { type: "number" },
    upper: { type: "number" },
    successes: { type: "integer" },
    trials: { type: "integer" },
  },
  required: ["value", "lower", "upper", "successes", "trials"],
};

const ingestAnswerSchema: JsonSchema = {
  type: "object",
  properties: {
    batchId: { type: "string", format: "uuid" },
    accepted: { type: "integer" },
    duplicate: { type: "integer" },
    conflict: { type: "integer" },
    rejected: { type: "integer" },
    errors: {
      type: "array",
      items: {
        type: "object",
        properties: { row: { type: "integer", description: "0-based index in the request" }, path: { type: "string" }, message: { type: "string" } },
        required: ["row", "path", "message"],
      },
    },
  },
};

const errorSchema: JsonSchema = {
  type: "object",
  properties: {
    error: {
      type: "object",
      properties: {
        code: { type: "string", enum: ["not_found", "forbidden", "unauthenticated", "conflict", "invalid_input", "too_large", "unsupported_media_type", "rate_limited", "unavailable", "internal"] },
        message: { type: "string" },
        requestId: { type: "string" },
        issues: { type: "array", items: { type: "object", properties: { path: { type: "string" }, message: { type: "string" }, row: { type: "integer" } } } },
      },
      required: ["code", "message", "requestId"],
    },
  },
};

interface Parameter {
  name: string;
  description: string;
  schema: JsonSchema;
  in?: "query" | "path";
}

interface RouteDescription {
  summary: string;
  description?: string;
  query?: Parameter[];
  body?: { schema: JsonSchema; ndjson?: boolean };
  response?: JsonSchema;
  responseContentType?: string;
}

const windowQuery: Parameter[] = [
  { name: "from", description: "Start of the window (ISO 8601 date or date-time, UTC).", schema: { type: "string" } },
  { name: "to", description: "End of the window (exclusive).", schema: { type: "string" } },
];

const metricsWindowQuery: Parameter[] = [
  { name: "window", description: "day, week (ISO week, Monday to Sunday, UTC) or custom (default).", schema: { type: "string", enum: ["day", "week", "custom"] } },
  { name: "date", description: "The day, or a day of the week, for window=day|week (YYYY-MM-DD; default today).", schema: { type: "string", format: "date" } },
  { name: "from", description: "First day of a custom window (YYYY-MM-DD; default 27 days before `to`).", schema: { type: "string", format: "date" } },
  { name: "to", description: "Last day of a custom window, included (YYYY-MM-DD; default today).", schema: { type: "string", format: "date" } },
  { name: "bucket", description: "Step of the series over time: day or week (default day up to 62 days, week beyond).", schema: { type: "string", enum: ["day", "week"] } },
];

const modelVersionMetricsQuery: Parameter[] = [
  { name: "modelVersionId", description: "Only this model version (repeatable, kept in the order given); default every active version and every version with alerts in the window.", schema: { type: "string", format: "uuid" } },
  { name: "driftCurrentDays", description: "PSI: the current window is the last N days of the window (default 14).", schema: { type: "integer", minimum: 1, maximum: 365 } },
  { name: "driftReferenceDays", description: "PSI: the reference window is the N days just before the current one (default 28).", schema: { type: "integer", minimum: 1, maximum: 365 } },
];

function arrayOf(schema: JsonSchema): JsonSchema {
  return { type: "array", items: schema };
}

export function buildOpenApiDocument(options: { channels: string[] }): JsonSchema {
  const alertRow = schemaOf(alertRowSchema({ channels: options.channels }));
  const descriptions: Record<string, RouteDescription> = {
    "GET /api/v1/whoami": { summary: "Whom the credentials belong to (person with role, or API client with scopes)." },
    "GET /api/v1/openapi.json": { summary: "This document." },
    "POST /api/v1/alerts": {
      summary: "Ingest scored alerts (JSON array or NDJSON).",
      description:
        "Valid rows are accepted and invalid ones reported with row, field path and message; `?atomic=true` accepts all or nothing. The same external id with the same content is a duplicate, with different content a conflict. A field that looks like a full card number rejects its row (shown masked). 400 malformed body (with position), 413 too many rows or too large, 415 wrong content type.",
      query: [{ name: "atomic", description: "true: accept all rows or none.", schema: { type: "boolean" } }],
      body: { schema: arrayOf(alertRow), ndjson: true },
      response: ingestAnswerSchema,
    },
    "POST /api/v1/labels": {
      summary: "Ingest late labels (chargebacks, customer reports). Idempotent per (alert, source, reference); labels for unknown alerts are kept for matching.",
      body: { schema: arrayOf(schemaOf(labelRowSchema)), ndjson: true },
      response: ingestAnswerSchema,
    },
    "POST /api/v1/outcomes": {
      summary: "Back-fill historical outcomes of ingested alerts (marked as imported). Idempotent per alert.",
      body: { schema: arrayOf(schemaOf(outcomeRowSchema)), ndjson: true },
      response: ingestAnswerSchema,
    },
    "GET /api/v1/model-versions": { summary: "The model-version registry (modelName, version, scoreKind, active, calibration state…)." },
    "POST /api/v1/model-versions": { summary: "Create or update a model version (admins). Answers the version, what changed and recomputedAlerts: the waiting alerts re-derived because β or the prior hit rate changed.", body: { schema: schemaOf(modelVersionInputSchema) } },
    "POST /api/v1/model-versions/{id}/refit": { summary: "Refit the calibration map of a model version now and recompute its waiting alerts." },
    "GET /api/v1/alerts/{id}": {
      summary: "Signed-in people only. One alert as the Alert page shows it: facts (masked entity reference), model view and probability source, expected-loss arithmetic, ranked reason codes, outcomes, labels, and the entity's other alerts of the last 90 days.",
    },
    "GET /api/v1/queue": {
      summary: "Waiting alerts in the order 'take next' hands them out, with probability, calibrated, exposureMinor, expectedLossMinor, dueAt, overdue.",
      query: [{ name: "limit", description: "How many (default 50, at most 500).", schema: { type: "integer", minimum: 1, maximum: 500 } }],
    },
    "GET /api/v1/workload": { summary: "Backlog by age and expected-loss band, overdue now and projected, per-analyst workload, time to clear." },
    "GET /api/v1/capacity": {
      summary: "Capacity planner: for K alerts a day, the threshold per model version, expected precision and expected loss caught; score order vs expected-loss order.",
      query: [{ name: "capacity", description: "K, alerts the team can review per day.", schema: { type: "integer", minimum: 1 } }],
    },
    "GET /api/v1/metrics/model-versions": {
      summary: "Per model version: outcome mix, realized precision (overall and over time), calibration report (reliability table, Brier, binned ECE), ROC AUC and average precision on reviewed alerts, PSI, precision at k.",
      description:
        "The Model health screen's numbers. Every rate is a Rate: value with its 95% Wilson interval and the counts behind it. Ground truth of an alert: its latest chargeback or customer report, else the final analyst outcome; inconclusive outcomes without a label are counted apart. Below-the-line samples are left out of the alerted-range numbers and reported apart, weighted by 1/π. Windows whose labels are not mature yet say `mature: false`. Score lists for AUC/AP and PSI hold all scores up to about 20,000 per list, a deterministic sample beyond (`sample`).",
      query: [...metricsWindowQuery, ...modelVersionMetricsQuery],
      response: schemaOf(modelVersionMetricsAnswerSchema),
    },
    "GET /api/v1/metrics/reviewers": {
      summary: "Per reviewer: closed first reviews, outcome mix, hit rate, observed over expected, false-clear rate, median handling time, agreement (Cohen's kappa) with second reviewers; and the team.",
      description:
        "The Reviewer quality screen's numbers. `standsOut` is above or below only when the reviewer's whole 95% interval lies beyond the team's rate. API tokens receive reviewers' pseudonyms; names (displayName) only go to signed-in supervisors and auditors.",
      query: metricsWindowQuery,
      response: schemaOf(reviewerMetricsAnswerSchema),
    },
    "GET /api/v1/audit/verify": { summary: "Walk the audit hash chain: the count verified and the head hash, or the first broken link." },
    "GET /api/v1/audit/events": { summary: "Audit events filtered by actor, action, alert and time range, with paging." },
    "GET /api/v1/label-exports": {
      summary: "Stream a label export (CSV, JSON Lines or Parquet) for retraining; recorded in the audit trail.",
      query: [
        { name: "format", description: "csv | jsonl | parquet", schema: { type: "string", enum: ["csv", "jsonl", "parquet"] } },
        { name: "modelVersion", description: "Model version id (repeatable).", schema: { type: "string" } },
        { name: "asOf", description: "Only what was known at this time.", schema: { type: "string", format: "date-time" } },
        ...windowQuery,
      ],
      responseContentType: "text/csv",
    },
    "GET /api/v1/label-exports/{id}/file": { summary: "Download a kept export file.", responseContentType: "application/octet-stream" },
    "GET /api/v1/ingest-batches": { summary: "Ingest batches with sender and counts (the Ingest log)." },
    "GET /api/v1/ingest-batches/{id}/rejected": { summary: "A batch's rejected rows with reasons, as CSV (card-number-like values masked).", responseContentType: "text/csv" },
  };

  const paths: Record<string, Record<string, unknown>> = {};
  const entries = Object.entries(apiRouteAccess as Record<string, ApiRouteAccess>);
  for (const [key, access] of entries) {
    const [method, rawPath] = key.split(" ");
    const path = rawPath.replace(/\[(\w+)\]/g, "{$1}");
    const described = descriptions[`${method} ${path}`] ?? { summary: `${method} ${path}` };
    const pathParameters = [...path.matchAll(/\{(\w+)\}/g)].map((match) => ({ name: match[1], in: "path", required: true, schema: { type: "string" } }));
    const security: Record<string, string[]>[] = [];
    if (access.scope) security.push({ bearerToken: access.scope === "any" ? [] : [access.scope] });
    if (access.permission) security.push({ sessionCookie: [] });
    const operation: Record<string, unknown> = {
      summary: described.summary,
      ...(described.description ? { description: described.description } : {}),
      "x-triage-desk-access": {
        apiScope: access.scope ?? null,
        signedInPermission: access.permission ?? null,
      },
      security,
      parameters: [...pathParameters, ...(described.query ?? []).map((parameter) => ({ in: "query", required: false, ...parameter }))],
      responses: {
        "200": {
          description: "OK",
          content: { [described.responseContentType ?? "application/json"]: { schema: described.response ?? { type: "object" } } },
        },
        "400": { description: "Invalid input", content: { "application/json": { schema: errorSchema } } },
        "401": { description: "Missing, unknown or revoked credentials", content: { "application/json": { schema: errorSchema } } },
        "403": { description: "Credentials lack the scope or permission", content: { "application/json": { schema: errorSchema } } },
      },
    };
    if (described.body) {
      operation.requestBody = {
        required: true,
        content: {
          "application/json": { schema: described.body.schema },
          ...(described.body.ndjson ? { "application/x-ndjson": { schema: (described.body.schema.items as JsonSchema) ?? described.body.schema } } : {}),
        },
      };
    }
    paths[path] ??= {};
    paths[path][method.toLowerCase()] = operation;
  }

  return {
    openapi: "3.1.0",
    info: {
      title: "Triage Desk API",
      version: "1",
      description:
        "Ingest of scored alerts, late labels and historical outcomes; the queue; metrics, workload and capacity; label exports; the audit trail. Scores support a decision; they do not make it.",
    },
    servers: [{ url: "/" }],
    components: {
      securitySchemes: {
        bearerToken: { type: "http", scheme: "bearer", description: "An API client's token (created by an admin; shown once). Scopes: alerts:write, labels:write, outcomes:write, metrics:read, exports:read." },
        sessionCookie: { type: "apiKey", in: "cookie", name: "td_session", description: "A signed-in person's session; the role must include the permission named in x-triage-desk-access." },
      },
      schemas: { Rate: rateSchema, IngestAnswer: ingestAnswerSchema, Error: errorSchema, Alert: alertRow },
    },
    paths,
  };
}
