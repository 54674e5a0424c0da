import { z } from "zod";

/** Payload of the analyse job: which scan to read (and split, once read). */
export const analysePayload = z.object({ scanId: z.uuid() });
export type AnalysePayload = z.infer<typeof analysePayload>;

/** Payload of the split job: split a scan again, with this sensitivity (0–1). */
export const splitPayload = z.object({ scanId: z.uuid(), sensitivity: z.number().min(0).max(1) });
export type SplitPayload = z.infer<typeof splitPayload>;

/** Payload of the render job: make the master and web copy of one fragment at a revision. */
export const renderPayload = z.object({
  fragmentId: z.uuid(),
  revision: z.number().int().positive(),
  /** Set when the render belongs to a batch, whose progress it reports. */
  batchItemId: z.uuid().optional(),
});
export type RenderPayload = z.infer<typeof renderPayload>;

/** Payload of the output job: make one batch item (a fragment × a preset version). */
export const outputPayload = z.object({ batchItemId: z.uuid() });
