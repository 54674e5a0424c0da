import { z } from "zod";
import { oneLine } from "./text";

export const SCAN_STATUSES = ["queued", "analysing", "ready", "failed", "duplicate"] as const;
export const scanStatusSchema = z.enum(SCAN_STATUSES);
export type ScanStatus = z.infer<typeof scanStatusSchema>;

/**
 * Where a scan's DPI came from: read from the file, the studio default because none was there, or
 * set by an operator who knows what the scanner used (the file said none, or a wrong figure).
 */
export const dpiSourceSchema = z.enum(["embedded", "assumed", "set"]);
export type DpiSource = z.infer<typeof dpiSourceSchema>;

/** Which record in the file held the resolution. */
export const resolutionOriginSchema = z.enum(["tiff", "exif", "jfif", "png-phys"]);
export type ResolutionOrigin = z.infer<typeof resolutionOriginSchema>;

export const scanSourceSchema = z.enum(["inbox", "upload", "library"]);

export const dpiSchema = z.object({
  x: z.number(),
  y: z.number(),
  source: dpiSourceSchema,
  origin: resolutionOriginSchema.nullable(),
});

/** A scan as the API presents it. Pixel and physical fields are null until analysed. */
export const scanSchema = z.object({
  id: z.string(),
  originalName: z.string(),
  intake: z.object({ id: z.string(), name: z.string() }),
  source: scanSourceSchema,
  status: scanStatusSchema,
  stage: z.string().nullable(),
  progress: z.number(),
  error: z.string().nullable(),
  /** The first scan of the same content; its status tells whether it failed (and was tried again). */
  duplicateOf: z.object({ id: z.string(), originalName: z.string(), status: scanStatusSchema, error: z.string().nullable() }).nullable(),
  sha256: z.string(),
  sizeBytes: z.number(),
  width: z.number().nullable(),
  height: z.number().nullable(),
  format: z.string().nullable(),
  bitDepth: z.number().nullable(),
  channels: z.number().nullable(),
  colourSpace: z.string().nullable(),
  hasIccProfile: z.boolean().nullable(),
  iccDescription: z.string().nullable(),
  hasAlpha: z.boolean().nullable(),
  dpi: dpiSchema.nullable(),
  /**
   * What the file itself records, once analysed: its figures, or null figures when it records none.
   * Differs from `dpi` only when someone set the resolution by hand.
   */
  fileDpi: z.object({ x: z.number().nullable(), y: z.number().nullable(), origin: resolutionOriginSchema.nullable() }).nullable(),
  physical: z.object({ widthIn: z.number(), heightIn: z.number(), widthCm: z.number(), heightCm: z.number() }).nullable(),
  attempts: z.number(),
  /**
   * Why it failed, as a code (worker/pipeline/errors.ts: empty, not_image, unsupported, truncated,
   * too_large, unreadable; "worker" when every attempt stopped otherwise); null unless failed.
   */
  errorCode: z.string().nullable(),
  /** Fragments the split proposed that still await review, and all kept fragments. */
  fragments: z.object({ proposed: z.number(), total: z.number() }),
  /** The sensitivity (0–1) of the last split, null before the first. */
  splitSensitivity: z.number().nullable(),
  hasPreview: z.boolean(),
  /**
   * Its file was filed but is still in the inbox (as `path` there): it still looked unfinished when
   * filed, and is taken in again, whole, if its writer finishes it ("unfinished"), or it could not
   * be removed ("not-removed", e.g. a read-only share). Null once it has left the inbox.
   */
  inInbox: z.object({ path: z.string(), reason: z.enum(["unfinished", "not-removed"]) }).nullable(),
  /**
   * Filed while its file still looked unfinished, that file was taken in again later as this scan:
   * "whole" once its writer finished it, "changed" when it still looked unfinished then.
   */
  continuedBy: z.object({ id: z.string(), originalName: z.string(), how: z.enum(["whole", "changed"]) }).nullable(),
  createdAt: z.string(),
  updatedAt: z.string(),
  analysedAt: z.string().nullable(),
});
export type Scan = z.infer<typeof scanSchema>;

export const SCAN_SORT_FIELDS = ["createdAt", "originalName", "status", "width", "dpi", "sizeBytes"] as const;

export const scanListQuery = z.object({
  status: scanStatusSchema.optional(),
  intakeId: z.uuid({ error: "Expected intakeId in UUID form" }).optional(),
  q: z.string().trim().max(200).optional(),
  sort: z.enum(SCAN_SORT_FIELDS).default("createdAt"),
  dir: z.enum(["asc", "desc"]).default("desc"),
  limit: z.coerce.number().int().min(1).max(500).default(100),
  offset: z.coerce.number().int().min(0).default(0),
});
export type ScanListQuery = z.input<typeof scanListQuery>;

export const scanListResponse = z.object({ scans: z.array(scanSchema), total: z.number() });
export const scanResponse = z.object({ scan: scanSchema });

export const uploadResponse = z.object({
  results: z.array(
    z.object({
      originalName: z.string(),
      scanId: z.string(),
      duplicateOf: z.string().nullable(),
      /** The first scan of this content had failed: arriving again, it is analysed again. */
      triedAgain: z.boolean(),
    }),
  ),
});

export const intakeSchema = z.object({
  id: z.string(),
  name: z.string(),
  createdAt: z.string(),
  scanCount: z.number(),
  current: z.boolean(),
});
export type Intake = z.infer<typeof intakeSchema>;
export const intakeListResponse = z.object({ intakes: z.array(intakeSchema) });
export const intakeResponse = z.object({ intake: intakeSchema });

export const createIntakeBody = z.object({
  name: z
    .string()
    .trim()
    .min(1, { error: "Enter a name for the intake" })
    .max(120)
    .refine(oneLine("an intake name").check, oneLine("an intake name").message),
});

/** Resolutions a person may set for a scan: what flatbed scanners offer, with room either side. */
export const SET_DPI_MIN = 50;
export const SET_DPI_MAX = 12_800;
const setDpi = z
  .number({ error: "Expected the resolution as a number of dots per inch" })
  .min(SET_DPI_MIN, { error: `Expected a resolution of at least ${SET_DPI_MIN} DPI` })
  .max(SET_DPI_MAX, { error: `Expected a resolution of at most ${SET_DPI_MAX} DPI` })
  // v × 100 is not exact in binary (64.1 × 100 = 6409.999…): within a millionth of a whole number.
  .refine((v) => Math.abs(v * 100 - Math.round(v * 100)) < 1e-6, { error: "Expected at most two decimals" });

/**
 * How far the two axes may differ, relative to the larger: the same tolerance the render allows
 * (worker/pipeline/render/index.ts, DPI_TOLERANCE), since turning a piece upright needs square pixels.
 */
export const SET_DPI_SQUARE_TOLERANCE = 0.005;

/** PATCH /api/scans/:id/resolution: the DPI the scan was made at (y defaults to x; square pixels only). */
export const setResolutionBody = z
  .strictObject({ x: setDpi, y: setDpi.optional() })
  .refine((b) => b.y === undefined || Math.abs(b.x - b.y) <= SET_DPI_SQUARE_TOLERANCE * Math.max(b.x, b.y), {
    error:
      "Expected the same resolution across and down: pieces are turned upright on square pixels, so a scan made at two resolutions cannot be rendered. Leave y out to use x for both.",
    path: ["y"],
  });
export type SetResolutionBody = z.infer<typeof setResolutionBody>;
