// The one permission matrix: what each role may do (OWASP ASVS 5.0 §8.2, "general authorization
// design": decisions are made on the server, from one place). Every page, server action and
// route handler asks `can(role, permission)` through lib/auth; nothing else decides.

export const roles = ["analyst", "supervisor", "admin", "auditor"] as const;
export type Role = (typeof roles)[number];

export const apiScopes = ["alerts:write", "labels:write", "outcomes:write", "metrics:read", "exports:read"] as const;
export type ApiScope = (typeof apiScopes)[number];

const everyone: readonly Role[] = roles;

export const permissionMatrix = {
  "queue.view": everyone,
  "alert.view": everyone,
  "alert.work": ["analyst", "supervisor"], // claim, release, record an outcome
  "alert.second_review": ["analyst", "supervisor"], // never on an alert the same person closed first
  "workload.view": ["supervisor", "admin", "auditor"],
  "workload.manage": ["supervisor"], // release an analyst's alerts, reassign
  "model_health.view": everyone,
  "calibration.refit": ["supervisor", "admin"],
  "reviewer_quality.view": ["supervisor", "auditor"],
  "audit.view": ["auditor", "supervisor", "admin"],
  "label_exports.view": ["supervisor", "admin", "auditor"],
  "label_exports.create": ["supervisor", "admin"],
  "ingest.view": ["supervisor", "admin", "auditor"],
  "ingest.upload": ["supervisor", "admin"],
  "settings.view": ["supervisor", "admin", "auditor"],
  "settings.queue.edit": ["supervisor", "admin"],
  "settings.costs.edit": ["admin"],
  "model_versions.manage": ["admin"],
  "users.manage": ["admin"],
  "api_clients.manage": ["admin"],
  "account.manage_own": everyone,
} as const satisfies Record<string, readonly Role[]>;

export type Permission = keyof typeof permissionMatrix;

export function can(role: Role, permission: Permission): boolean {
  return (permissionMatrix[permission] as readonly Role[]).includes(role);
}

export function isRole(value: string): value is Role {
  return (roles as readonly string[]).includes(value);
}
