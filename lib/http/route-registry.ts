// THE registry of entry points: every app/api/**/route.ts handler and every exported server action
// has exactly one entry here, and reaches the app only through apiRoute() / formAction() /
// plainAction(), which look their entry up by key. tests/auth/route-permissions.test.ts walks the
// app/ folder and fails for a handler or action without an entry, or an entry without one.
//
// API keys: "<METHOD> <path>", the path as in the app/ folder, e.g. "GET /api/v1/alerts/[id]".
// Server-action keys: "<file under the repository root>#<export name>".
import type { ApiRouteAccess, ServerActionAccess } from "@/lib/http/route-access";

export const apiRouteAccess = {
  "GET /api/v1/whoami": { scope: "any", permission: "account.manage_own" },
  // The API's own description: any valid token or anyone signed in.
  "GET /api/v1/openapi.json": { scope: "any", permission: "account.manage_own" },
  // The audit trail: API tokens with metrics:read (a monitoring job checking the chain), or auditors, supervisors and admins.
  "GET /api/v1/audit/verify": { scope: "metrics:read", permission: "audit.view" },
  "GET /api/v1/audit/events": { scope: "metrics:read", permission: "audit.view" },
  // Ingest: the scoring service with its token; supervisors and admins through the upload screen.
  "POST /api/v1/alerts": { scope: "alerts:write", permission: "ingest.upload" },
  // Signed-in people only: the answer names reviewers and carries their notes.
  "GET /api/v1/alerts/[id]": { permission: "alert.view" },
  "POST /api/v1/labels": { scope: "labels:write", permission: "ingest.upload" },
  "POST /api/v1/outcomes": { scope: "outcomes:write", permission: "ingest.upload" },
  "GET /api/v1/ingest-batches": { permission: "ingest.view" },
  "GET /api/v1/ingest-batches/[id]/rejected": { permission: "ingest.view" },
  "GET /api/v1/model-versions": { scope: "any", permission: "model_health.view" },
  "POST /api/v1/model-versions": { permission: "model_versions.manage" },
  // Label exports: API tokens with exports:read; signed-in people who may make exports (stream) or see them (kept files).
  "GET /api/v1/label-exports": { scope: "exports:read", permission: "label_exports.create" },
  "GET /api/v1/label-exports/[id]/file": { scope: "exports:read", permission: "label_exports.view" },
  // Workload and capacity planner: API tokens with metrics:read; supervisors, admins and auditors.
  "GET /api/v1/workload": { scope: "metrics:read", permission: "workload.view" },
  "GET /api/v1/capacity": { scope: "metrics:read", permission: "workload.view" },
  // The queue in take-next order, for wallboards: API tokens with metrics:read, or anyone signed in.
  "GET /api/v1/queue": { scope: "metrics:read", permission: "queue.view" },
  // Feedback-loop metrics: API tokens with metrics:read; model health for anyone signed in, reviewer
  // quality for supervisors and auditors (tokens get reviewers' pseudonyms, not their names).
  "GET /api/v1/metrics/model-versions": { scope: "metrics:read", permission: "model_health.view" },
  "GET /api/v1/metrics/reviewers": { scope: "metrics:read", permission: "reviewer_quality.view" },
  // On-demand calibration refit: supervisors and admins (no API scope covers it).
  "POST /api/v1/model-versions/[id]/refit": { permission: "calibration.refit" },
} as const satisfies Record<string, ApiRouteAccess>;

export type ApiRouteKey = keyof typeof apiRouteAccess;

export const serverActionAccess = {
  "app/(desk)/settings/model-version-actions.ts#saveModelVersionAction": "model_versions.manage",
  "app/sign-in/actions.ts#signInAction": "public",
  "app/sign-out/actions.ts#signOutAction": "public",
  "app/(desk)/account/actions.ts#changeOwnPasswordAction": "account.manage_own",
  "app/(desk)/admin/users/actions.ts#createUserAction": "users.manage",
  "app/(desk)/admin/users/actions.ts#changeRoleAction": "users.manage",
  "app/(desk)/admin/users/actions.ts#deactivateUserAction": "users.manage",
  "app/(desk)/admin/users/actions.ts#reactivateUserAction": "users.manage",
  "app/(desk)/admin/api-clients/actions.ts#createApiClientAction": "api_clients.manage",
  "app/(desk)/admin/api-clients/actions.ts#revokeApiClientAction": "api_clients.manage",
  "app/(desk)/label-exports/actions.ts#createLabelExportAction": "label_exports.create",
  "app/(desk)/workload/actions.ts#releaseAnalystAlertsAction": "workload.manage",
  "app/(desk)/workload/actions.ts#reassignAlertAction": "workload.manage",
  "app/(desk)/queue/actions.ts#takeNextAction": "alert.work",
  "app/(desk)/alerts/[id]/actions.ts#claimAlertAction": "alert.work",
  "app/(desk)/alerts/[id]/actions.ts#releaseAlertAction": "alert.work",
  "app/(desk)/alerts/[id]/actions.ts#recordOutcomeAction": "alert.work",
  "app/(desk)/alerts/[id]/actions.ts#recordSecondReviewAction": "alert.second_review",
  // Settings: queue (supervisors, admins), costs (admins), calibration minimums and refits (supervisors, admins).
  "app/(desk)/settings/actions.ts#saveQueueSettingsAction": "settings.queue.edit",
  "app/(desk)/settings/actions.ts#saveCostSettingsAction": "settings.costs.edit",
  "app/(desk)/settings/actions.ts#saveCalibrationSettingsAction": "calibration.refit",
  "app/(desk)/settings/actions.ts#refitCalibrationAction": "calibration.refit",
} as const satisfies Record<string, ServerActionAccess>;

export type ServerActionKey = keyof typeof serverActionAccess;
