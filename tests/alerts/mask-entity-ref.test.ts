import { describe, expect, it } from "vitest";
import { maskEntityRef } from "@/lib/alerts/mask-entity-ref";
import { merchantCategory } from "@/lib/alerts/merchant-categories";

describe("masked entity references", () => {
  it("keep a kind prefix and the last four characters", () => {
    expect(maskEntityRef("tok_5a17c0")).toBe("tok_••••17c0");
    expect(maskEntityRef("acct-00098812")).toBe("acct-••••8812");
  });

  it("never show more than the last four digits of a masked card form", () => {
    expect(maskEntityRef("411111******1111")).toBe("••••1111");
    expect(maskEntityRef("4111 11** **** 1111")).toBe("••••1111");
  });

  it("short references show less", () => {
    expect(maskEntityRef("c-123")).toBe("••••23");
    expect(maskEntityRef("abc")).toBe("••••c");
  });
});

describe("merchant categories", () => {
  it("describe common codes in plain words", () => {
    expect(merchantCategory("4829")).toEqual({ code: "4829", description: "Money transfer", known: true });
    expect(merchantCategory("6011").description).toMatch(/ATM/);
  });

  it("fall back to the code's broad range", () => {
    expect(merchantCategory("3512")).toEqual({ code: "3512", description: "Lodging (by chain) (code not in our list)", known: false });
    expect(merchantCategory("0000").known).toBe(false);
  });
});
