import { z } from "zod";
import { oneLine } from "./text";
import { SET_DPI_MAX, SET_DPI_MIN } from "./scans";

/** What anyone may read (the sign-in page shows the name). */
export const studioSchema = z.object({
  name: z.string(),
  defaultDpi: z.number(),
  demo: z.boolean(),
});
export type Studio = z.infer<typeof studioSchema>;
export const studioResponse = z.object({ studio: studioSchema });

/**
 * The studio's settings as operators read them and admins change them. Creator and copyright are
 * written into every master and copy made after they are saved (null: none is written).
 */
export const studioSettingsSchema = z.object({
  name: z.string(),
  defaultDpi: z.number(),
  creator: z.string().nullable(),
  copyright: z.string().nullable(),
  updatedAt: z.string(),
  /** The last save that changed these settings and who made it (null: as first start wrote them). */
  saved: z.object({ at: z.string(), by: z.string().nullable() }).nullable(),
});
export type StudioSettings = z.infer<typeof studioSettingsSchema>;
export const studioSettingsResponse = z.object({ settings: studioSettingsSchema });

export const STUDIO_NAME_MAX = 80;
export const CREATOR_MAX = 200;
export const COPYRIGHT_MAX = 300;

/** Empty text means "none" for the optional fields. */
const optionalText = (what: string, max: number) =>
  z
    .string()
    .trim()
    .max(max, { error: `Expected ${what} of at most ${max} characters` })
    .refine(oneLine(what).check, oneLine(what).message)
    .nullable()
    .transform((v) => (v ? v : null));

/** PATCH /api/studio/settings (admins). Only the fields given change. */
export const updateStudioBody = z
  .strictObject({
    name: z
      .string()
      .trim()
      .min(1, { error: "Expected the studio's name" })
      .max(STUDIO_NAME_MAX, { error: `Expected a name of at most ${STUDIO_NAME_MAX} characters` })
      .refine(oneLine("a name").check, oneLine("a name").message),
    defaultDpi: z
      .number({ error: "Expected the assumed resolution as a whole number of DPI" })
      .int({ error: "Expected the assumed resolution as a whole number of DPI" })
      .min(SET_DPI_MIN, { error: `Expected an assumed resolution of at least ${SET_DPI_MIN} DPI` })
      .max(SET_DPI_MAX, { error: `Expected an assumed resolution of at most ${SET_DPI_MAX} DPI` }),
    creator: optionalText("a creator", CREATOR_MAX),
    copyright: optionalText("a copyright line", COPYRIGHT_MAX),
    // A demo studio taken on as the studio's own drops its mark; nothing makes a studio a demo again.
    demo: z.literal(false, { error: "Expected demo: false (a studio stops being marked as a demo; it cannot become one again)" }),
  })
  .partial()
  .refine((b) => Object.keys(b).length > 0, { error: "Expected at least one setting to change" });
export type UpdateStudioBody = z.infer<typeof updateStudioBody>;

/**
 * How many masters already made carry the studio's current creator and copyright. Counted over
 * approved pieces whose render is done at their current revision; a piece counts as behind when
 * its master or web copy carries other rights, or was made before files' rights were recorded.
 */
export const mastersRightsSchema = z.object({
  /** The studio's rights these are compared with. */
  creator: z.string().nullable(),
  copyright: z.string().nullable(),
  masters: z.number().int(),
  behind: z.number().int(),
  /** Of those behind, made before Platen recorded what a file carries (they may already agree). */
  unknown: z.number().int(),
  /** Pieces with a rewrite queued or running now. */
  writing: z.number().int(),
  /** Of those behind, pieces whose last rewrite failed for good; and why (up to 3 messages, kept on the piece until a rewrite succeeds). */
  failed: z.number().int(),
  reasons: z.array(z.string()),
});
export type MastersRights = z.infer<typeof mastersRightsSchema>;
export const mastersRightsResponse = z.object({ rights: mastersRightsSchema });

/**
 * POST /api/studio/masters-rights (admins): writes the studio's rights into the masters behind.
 * Names the creator and copyright the admin saw: when the studio's differ by then, it is refused.
 */
export const writeMastersRightsBody = z.strictObject({
  creator: z.string().max(CREATOR_MAX).nullable(),
  copyright: z.string().max(COPYRIGHT_MAX).nullable(),
});
export type WriteMastersRightsBody = z.infer<typeof writeMastersRightsBody>;
export const writeMastersRightsResponse = z.object({ queued: z.number().int(), rights: mastersRightsSchema });
