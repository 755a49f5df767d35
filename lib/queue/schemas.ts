// Inputs and outputs of the queue: claiming, releasing, and the queue listing of GET /api/v1/queue.
import { z } from "zod";

/** An alert as a claim or a release hands it back. */
export const claimedAlertSchema = z.object({
  id: z.string().uuid(),
  externalId: z.string(),
  modelVersionId: z.string().uuid(),
  state: z.enum(["waiting", "in_review", "second_review", "closed"]),
  assignedToId: z.string().uuid().nullable(),
  claimedAt: z.date().nullable(),
  leaseExpiresAt: z.date().nullable(),
  dueAt: z.date().nullable(),
  priority: z.number().nullable(),
  expectedLossMinor: z.number().int().nullable(),
});
export type ClaimedAlert = z.infer<typeof claimedAlertSchema>;

/** The part of an alert that decides who may close it (assertHeldBy). */
export interface HoldableAlert {
  id: string;
  state: string;
  assignedToId: string | null;
}

export const QUEUE_LIST_MAX = 500;

/** GET /api/v1/queue?limit=N&offset=M */
export const queueListQuerySchema = z.object({
  limit: z.coerce.number().int("limit must be a whole number").min(1, "limit must be at least 1").max(QUEUE_LIST_MAX, `limit must be at most ${QUEUE_LIST_MAX}`).default(50),
  offset: z.coerce.number().int("offset must be a whole number").min(0, "offset must be 0 or more").max(100_000, "offset must be at most 100000").default(0),
});
export type QueueListQuery = z.infer<typeof queueListQuerySchema>;

export const releaseReasonSchema = z.string().trim().min(1).max(200);
