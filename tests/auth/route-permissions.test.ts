// Every entry point of the app against the one permission matrix (OWASP ASVS 5.0 §8.1.1 documented
// access rules, §8.2.1 function-level authorization; from memory). The test walks app/: a route
// handler, a server action or a desk page that is not wired to the registry / matrix fails here,
// and so does a registry entry whose handler is gone. Then, for every entry, every role, every API
// scope and no session, the registry's decision must equal the matrix.
import { readdirSync, readFileSync, statSync } from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { apiScopes, can, permissionMatrix, roles } from "@/lib/auth/permissions";
import { decideActionAccess, decideApiAccess, type ApiRouteAccess, type ServerActionAccess } from "@/lib/http/route-access";
import { apiRouteAccess, serverActionAccess } from "@/lib/http/route-registry";

const root = process.cwd();
const httpMethods = ["GET", "HEAD", "POST", "PUT", "PATCH", "DELETE", "OPTIONS"];

function filesUnder(folder: string): string[] {
  const absolute = path.join(root, folder);
  const found: string[] = [];
  for (const name of readdirSync(absolute)) {
    const relative = path.posix.join(folder, name);
    if (statSync(path.join(root, relative)).isDirectory()) found.push(...filesUnder(relative));
    else if (/\.(ts|tsx|js|jsx|mjs)$/.test(name)) found.push(relative);
  }
  return found;
}

const appFiles = filesUnder("app");
const read = (file: string) => readFileSync(path.join(root, file), "utf8");

/** "app/api/v1/(group)/alerts/[id]/route.ts" → "/api/v1/alerts/[id]" */
function routePathOf(file: string): string {
  const segments = path.posix.dirname(file).split("/").slice(1).filter((segment) => !/^\(.*\)$/.test(segment) && !segment.startsWith("@"));
  return `/${segments.join("/")}`;
}

function withoutComments(source: string): string {
  return source.replace(/\/\*[\s\S]*?\*\//g, "").replace(/(^|[^:"'`])\/\/.*$/gm, "$1");
}

interface Found {
  file: string;
  name: string;
  key: string | null;
  problem: string | null;
}

function routeHandlers(): Found[] {
  const found: Found[] = [];
  for (const file of appFiles.filter((candidate) => /\/route\.(ts|js)$/.test(candidate))) {
    const source = withoutComments(read(file));
    const expectedPath = routePathOf(file);
    for (const method of httpMethods) {
      const wrapped = new RegExp(`export\\s+const\\s+${method}\\s*=\\s*apiRoute\\(\\s*"([^"]+)"`).exec(source);
      const exported = new RegExp(`export\\s+(?:(?:async\\s+)?function\\s+${method}\\b|const\\s+${method}\\b|\\{[^}]*\\b${method}\\b[^}]*\\})`).test(source);
      if (!exported) continue;
      if (!wrapped) {
        found.push({ file, name: method, key: null, problem: `${file}: ${method} must be \`export const ${method} = apiRoute("${method} ${expectedPath}", …)\`` });
        continue;
      }
      const key = wrapped[1];
      const problem = key !== `${method} ${expectedPath}` ? `${file}: ${method} is registered as "${key}", expected "${method} ${expectedPath}"` : null;
      found.push({ file, name: method, key, problem });
    }
  }
  return found;
}

function serverActions(): Found[] {
  const found: Found[] = [];
  for (const file of appFiles) {
    const raw = read(file);
    if (!/["']use server["']/.test(raw)) continue;
    const source = withoutComments(raw);
    const fileLevel = /^\s*["']use server["'];?/.test(source);
    if (!fileLevel) {
      found.push({ file, name: "(inline)", key: null, problem: `${file}: inline "use server" functions cannot be checked; move them to an actions file built with formAction()/plainAction()` });
      continue;
    }
    for (const match of source.matchAll(/export\s+(default\s+)?(async\s+function\s*\*?\s*(\w*)|function\s+(\w+)|const\s+(\w+)\s*=\s*([\s\S]{0,200})|\{[^}]*\})/g)) {
      const name = match[3] ?? match[4] ?? match[5] ?? "(export list)";
      const wrapped = match[5] ? /^(formAction|plainAction)\(\s*"([^"]+)"/.exec(match[6]) : null;
      if (!wrapped) {
        found.push({ file, name, key: null, problem: `${file}: export ${name} must be \`export const ${name} = formAction("${file}#${name}", …)\` (or plainAction)` });
        continue;
      }
      const key = wrapped[2];
      const problem = key !== `${file}#${name}` ? `${file}: ${name} is registered as "${key}", expected "${file}#${name}"` : null;
      found.push({ file, name, key, problem });
    }
  }
  return found;
}

const handlers = routeHandlers();
const actions = serverActions();

describe("every entry point is in the registry", () => {
  it("each route handler is wrapped by apiRoute() with its own method and path", () => {
    expect(handlers.filter((handler) => handler.problem).map((handler) => handler.problem)).toEqual([]);
  });

  it("each route handler's key has an entry", () => {
    const missing = handlers.filter((handler) => handler.key && !(handler.key in apiRouteAccess)).map((handler) => `${handler.file}: no entry "${handler.key}" in lib/http/route-registry.ts`);
    expect(missing).toEqual([]);
  });

  it("each server action is built by formAction()/plainAction() with its own file and name", () => {
    expect(actions.filter((action) => action.problem).map((action) => action.problem)).toEqual([]);
  });

  it("each server action's key has an entry", () => {
    const missing = actions.filter((action) => action.key && !(action.key in serverActionAccess)).map((action) => `${action.file}: no entry "${action.key}" in lib/http/route-registry.ts`);
    expect(missing).toEqual([]);
  });

  it("each registry entry still has its handler or action", () => {
    const routeKeys = new Set(handlers.map((handler) => handler.key));
    const actionKeys = new Set(actions.map((action) => action.key));
    const stale = [
      ...Object.keys(apiRouteAccess).filter((key) => !routeKeys.has(key)),
      ...Object.keys(serverActionAccess).filter((key) => !actionKeys.has(key)),
    ];
    expect(stale).toEqual([]);
  });

  it("each desk page asks requirePagePermission() on the server", () => {
    const pages = appFiles.filter((file) => file.startsWith("app/(desk)/") && /\/page\.(tsx|ts|jsx|js)$/.test(file));
    expect(pages.length).toBeGreaterThan(0);
    const unchecked = pages.filter((file) => !/requirePagePermission\(\s*"[a-z_.]+"\s*\)/.test(withoutComments(read(file))));
    expect(unchecked).toEqual([]);
  });

  it("names only permissions of the matrix", () => {
    const permissions = new Set(Object.keys(permissionMatrix));
    const unknown = [
      ...Object.values(apiRouteAccess as Record<string, ApiRouteAccess>).flatMap((access) => (access.permission ? [access.permission] : [])),
      ...Object.values(serverActionAccess as Record<string, ServerActionAccess>).filter((access) => access !== "public"),
    ].filter((permission) => !permissions.has(permission));
    expect(unknown).toEqual([]);
  });
});

const routeCases = Object.entries(apiRouteAccess as Record<string, ApiRouteAccess>);
const actionCases = Object.entries(serverActionAccess as Record<string, ServerActionAccess>);

describe.each(routeCases)("route %s", (_key, access) => {
  it.each(roles)("decides for a signed-in %s exactly as the matrix does", (role) => {
    const expected = access.permission ? can(role, access.permission) : false;
    const decision = decideApiAccess(access, { type: "user", role });
    expect(decision.allowed).toBe(expected);
    if (!decision.allowed) expect(decision.status).toBe(403);
  });

  it("refuses a caller without a session or token with 401", () => {
    expect(decideApiAccess(access, { type: "none" })).toMatchObject({ allowed: false, status: 401 });
  });

  it.each(apiScopes)("decides for a token holding only %s by its scope", (scope) => {
    const expected = access.scope === "any" || access.scope === scope;
    expect(decideApiAccess(access, { type: "api_client", scopes: [scope] }).allowed).toBe(expected);
  });
});

describe.each(actionCases)("server action %s", (_key, access) => {
  it.each(roles)("decides for a signed-in %s exactly as the matrix does", (role) => {
    expect(decideActionAccess(access, { type: "user", role }).allowed).toBe(access === "public" || can(role, access));
  });

  it("is refused without a session unless it is public", () => {
    expect(decideActionAccess(access, { type: "none" }).allowed).toBe(access === "public");
  });
});
