import { describe, expect, it } from "vitest";
import { safeNextPath, signInPathFor } from "@/lib/http/safe-next-path";

describe("the page to return to after signing in", () => {
  it.each([
    ["/admin/users", "/admin/users"],
    ["/queue?sort=loss&page=2", "/queue?sort=loss&page=2"],
    ["https://elsewhere.example/", "/queue"],
    ["//elsewhere.example/", "/queue"],
    ["/\\elsewhere.example", "/queue"],
    ["/queue\nSet-Cookie: x", "/queue"],
    ["javascript:alert(1)", "/queue"],
    ["/sign-in?next=/sign-in", "/queue"],
    ["", "/queue"],
    [undefined, "/queue"],
  ])("%j → %s", (given, expected) => {
    expect(safeNextPath(given)).toBe(expected);
  });

  it("is carried in the sign-in link only when it is not the default", () => {
    expect(signInPathFor("/admin/api-clients")).toBe("/sign-in?next=%2Fadmin%2Fapi-clients");
    expect(signInPathFor("/queue")).toBe("/sign-in");
    expect(signInPathFor(null)).toBe("/sign-in");
    expect(signInPathFor("//evil.example")).toBe("/sign-in");
  });
});
