// One model version by its name and version, as alerts name it; null when there is none.
import "server-only";
import type { DbOrTx } from "@/lib/db/client";
import type { ModelVersionView } from "@/lib/model-versions/schemas";

export interface FindModelVersionByNameOptions {
  modelName: string;
  version: string;
}

export async function findModelVersionByName(db: DbOrTx, options: FindModelVersionByNameOptions): Promise<ModelVersionView | null> {
  const found = await db.modelVersion.findUnique({
    where: { modelName_version: { modelName: options.modelName, version: options.version } },
    include: { calibrationMaps: { orderBy: { fittedAt: "desc" }, take: 1, select: { fittedAt: true, labelCount: true } } },
  });
  if (!found) return null;
  const { calibrationMaps, ...version } = found;
  return {
    ...version,
    scoreKind: version.scoreKind as ModelVersionView["scoreKind"],
    calibratedAt: calibrationMaps[0]?.fittedAt ?? null,
    calibrationLabelCount: calibrationMaps[0]?.labelCount ?? null,
  };
}
