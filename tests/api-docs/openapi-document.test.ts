import { describe, expect, it } from "vitest";
import { buildOpenApiDocument } from "@/lib/api-docs/openapi-document";
import { apiRouteAccess } from "@/lib/http/route-registry";
import { alertRowSchema } from "@/lib/ingest/schemas";

const document = buildOpenApiDocument({ channels: ["card_present", "card_not_present", "atm"] }) as {
  openapi: string;
  paths: Record<string, Record<string, { security: Record<string, string[]>[]; requestBody?: unknown }>>;
  components: { schemas: Record<string, unknown> };
};

describe("the OpenAPI document", () => {
  it("is OpenAPI 3.1 (the version whose schemas are JSON Schema 2020-12, which zod emits)", () => {
    expect(document.openapi).toBe("3.1.0");
  });

  it("lists every route of the registry with the scope it needs", () => {
    for (const [key, access] of Object.entries(apiRouteAccess)) {
      const [method, rawPath] = key.split(" ");
      const operation = document.paths[rawPath.replace(/\[(\w+)\]/g, "{$1}")]?.[method.toLowerCase()];
      expect(operation, key).toBeDefined();
      const scope = (access as { scope?: string }).scope;
      if (scope && scope !== "any") expect(operation.security).toContainEqual({ bearerToken: [scope] });
    }
  });

  it("describes the alert body with the same rules the ingest validates (the issue's contract example)", () => {
    // The contract example of the ingest issue, which the schema itself must accept.
    const example = {
      externalId: "txn-000123", occurredAt: "2026-11-30T10:00:00Z", amountMinor: 12000, currency: "EUR", channel: "card_not_present",
      merchantCategoryCode: "5999", merchantCountry: "NL", entityRef: "tok_9f2c41", modelName: "txn-classifier", modelVersion: "3.1.0",
      score: 0.91, reasonCodes: [{ code: "velocity_1h", contribution: 0.31 }], belowTheLine: false, inclusionProbability: null,
    };
    expect(alertRowSchema({ channels: ["card_not_present"] }).safeParse(example).success).toBe(true);
    const alert = document.components.schemas.Alert as { required: string[]; properties: Record<string, { enum?: string[]; pattern?: string }> };
    expect(alert.required).toEqual(expect.arrayContaining(["externalId", "occurredAt", "amountMinor", "currency", "merchantCategoryCode", "score"]));
    expect(alert.properties.channel.enum).toEqual(["card_present", "card_not_present", "atm"]);
    // ISO 18245 merchant category codes are four digits; ISO 4217 alphabetic codes three capitals.
    expect(new RegExp(alert.properties.merchantCategoryCode.pattern as string).test("5999")).toBe(true);
    expect(new RegExp(alert.properties.currency.pattern as string).test("eur")).toBe(false);
  });
});
