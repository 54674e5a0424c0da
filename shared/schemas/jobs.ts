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

/**
 * Payload of the rights job: write the fragment's current title into its existing master and web
 * copy, with the creator and copyright they carry ("keep") or the studio's current ones ("studio").
 */
export const rightsPayload = z.object({
  fragmentId: z.uuid(),
  rights: z.enum(["keep", "studio"]).default("keep"),
});
export type RightsPayload = z.input<typeof rightsPayload>;

/** Payload of the output job: make one batch item (a fragment × a preset version). */
export const outputPayload = z.object({ batchItemId: z.uuid() });

/** Payload of the refile job: one original no scan names, and the admin who asked for it to be filed again. */
export const refilePayload = z.object({ key: z.string().startsWith("originals/"), actorId: z.uuid(), actorEmail: z.string() });

/** Payload of the off-site copy and re-check jobs: one master (its outputs row). */
export const offsitePayload = z.object({ outputId: z.uuid() });
export type OffsitePayload = z.infer<typeof offsitePayload>;

/**
 * Payload of the notice job: something happened that people may have asked to hear about. The
 * job decides who (their notice choices) and what (it reads the current state), so sending it
 * twice gives each person one message.
 */
export const noticePayload = z.discriminatedUnion("event", [
  z.object({ event: z.literal("batch-finished"), batchId: z.uuid() }),
  z.object({ event: z.literal("scan-failed"), scanId: z.uuid() }),
  /** A scan of this intake reached a final state; the job checks whether the whole intake has. */
  z.object({ event: z.literal("intake-settled"), intakeId: z.uuid() }),
]);
export type NoticePayload = z.infer<typeof noticePayload>;

/** Payload of the mail job: hand one outbox message to the mail server. */
export const mailSendPayload = z.object({ outboxId: z.uuid() });
