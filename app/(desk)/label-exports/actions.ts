"use server";
import { revalidatePath } from "next/cache";
import { z } from "zod";
import { db, pool } from "@/lib/db/client";
import { formAction } from "@/lib/http/server-action";
import { createLabelExport } from "@/lib/exports/create-label-export";
import { resolveLabelExportParams } from "@/lib/exports/resolve-label-export-params";

// The fields are checked by resolveLabelExportParams() (the same rules as the API's query string);
// its AppError issues come back to the form as field errors.
const rawFields = z.record(z.string(), z.union([z.string(), z.array(z.string())]));

export const createLabelExportAction = formAction(
  "app/(desk)/label-exports/actions.ts#createLabelExportAction",
  rawFields,
  async (input, { user, context, now }) => {
    const choices = await resolveLabelExportParams(db(), { params: input, now });
    const started = await createLabelExport(
      { prisma: db(), pool: pool() },
      { actor: user, choices, now, destination: { kind: "file" }, context: { requestId: context.requestId, ipAddress: context.ipAddress } },
    );
    // Not awaited: a long export goes on in this server process after the answer; the page shows its
    // progress. `completion` never rejects (a failure is recorded on the export's row).
    void started.completion;
    revalidatePath("/label-exports");
    return { message: `Started the export (${started.choices.format.toUpperCase()}). It appears below; its file is ready to download when it is done.` };
  },
  { keep: ["from", "to", "asOf", "maturityDays", "format"] },
);
