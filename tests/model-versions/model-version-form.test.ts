import { describe, expect, it } from "vitest";
import { modelVersionFormSchema, modelVersionInputFromForm, modelVersionInputSchema } from "@/lib/model-versions/schemas";

const form = (fields: Record<string, string>) => modelVersionInputFromForm(modelVersionFormSchema.parse(fields));

describe("the Settings screen's model-version form", () => {
  it("turns a probability model's text fields into a valid input, empty β meaning no undersampling", () => {
    const input = form({ modelName: " card-risk-gbm ", version: "5.3.0", scoreKind: "probability", negativeSamplingRate: "", priorHitRate: "", alertThreshold: "0.55", active: "on" });
    expect(input).toEqual({ modelName: "card-risk-gbm", version: "5.3.0", scoreKind: "probability", negativeSamplingRate: undefined, priorHitRate: null, alertThreshold: 0.55, active: true });
    expect(modelVersionInputSchema.parse(input)).toMatchObject({ negativeSamplingRate: 1, active: true });
  });

  it("keeps text that is not a number, so validation names the field; an unticked box retires", () => {
    const input = form({ modelName: "spend-ae", version: "2.1.0", scoreKind: "anomaly", priorHitRate: "twelve percent", alertThreshold: "4" });
    expect(input).toMatchObject({ priorHitRate: "twelve percent", active: false });
    const parsed = modelVersionInputSchema.safeParse(input);
    expect(parsed.success).toBe(false);
    expect(parsed.error?.issues.map((issue) => issue.path.join("."))).toContain("priorHitRate");
  });
});
