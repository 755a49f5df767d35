// The choices of a label export from text: the screen's form or the API's query string, which use the
// same names. Model versions may be given by id or, in the API, as "<model name>@<version>".
import "server-only";
import type { DbOrTx } from "@/lib/db/client";
import { AppError } from "@/lib/errors";
import { getSettings } from "@/lib/settings/get-settings";
import { choicesFromParams, labelExportParamsSchema, type LabelExportChoicesInput } from "@/lib/exports/schemas";

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

export interface ResolveLabelExportParamsOptions {
  /** Field name → value(s), as from a form or URLSearchParams. */
  params: Record<string, string | string[] | undefined>;
  now: Date;
}

/** Still to be checked by createLabelExport() (ranges, as-of not in the future, ids that exist). */
export async function resolveLabelExportParams(db: DbOrTx, options: ResolveLabelExportParamsOptions): Promise<LabelExportChoicesInput> {
  const parsed = labelExportParamsSchema.safeParse(options.params);
  if (!parsed.success) {
    throw new AppError(
      "invalid_input",
      "The export's choices are not valid.",
      parsed.error.issues.map((issue) => ({ path: issue.path.join("."), message: issue.message })),
    );
  }
  const modelVersionIds: string[] = [];
  for (const ref of parsed.data.modelVersion) {
    if (UUID.test(ref)) {
      modelVersionIds.push(ref.toLowerCase());
      continue;
    }
    const at = ref.lastIndexOf("@");
    const found =
      at > 0 ? await db.modelVersion.findUnique({ where: { modelName_version: { modelName: ref.slice(0, at), version: ref.slice(at + 1) } }, select: { id: true } }) : null;
    if (!found) {
      throw new AppError("invalid_input", "Unknown model version.", [{ path: "modelVersion", message: `expected a model version id or "<model name>@<version>" that exists, got "${ref}"` }]);
    }
    modelVersionIds.push(found.id);
  }
  const settings = await getSettings(db);
  return choicesFromParams(parsed.data, { modelVersionIds: [...new Set(modelVersionIds)], now: options.now, defaultMaturityDays: settings.metrics.labelMaturityDays });
}
