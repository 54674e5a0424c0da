import { z } from "zod";
import { oneLine } from "./text";
import { dpiSourceSchema } from "./scans";

/**
 * Fragment geometry, in the source scan's pixels (x right, y down).
 * - box: axis-aligned bounding box of the piece.
 * - angle: clockwise rotation in degrees (sharp's `rotate` sense) that makes the piece upright,
 *   in (-45, 45]. A piece lying turned 7.5° counter-clockwise has angle +7.5.
 * - rect: the piece's minimum-area rectangle: centre and upright size (width along the side
 *   nearest to horizontal). Rotating the scan by `angle` about the centre and cropping
 *   width × height around it gives the upright piece.
 * - outline: simplified polygon of the piece's edge (cutouts keep this shape as transparency).
 */
export const pointSchema = z.tuple([z.number(), z.number()]);
export const boxSchema = z.object({
  x: z.number().int().min(0),
  y: z.number().int().min(0),
  width: z.number().int().positive(),
  height: z.number().int().positive(),
});
export type Box = z.infer<typeof boxSchema>;

export const rectSchema = z.object({
  cx: z.number(),
  cy: z.number(),
  width: z.number().positive(),
  height: z.number().positive(),
});
export type Rect = z.infer<typeof rectSchema>;

export const angleSchema = z
  .number()
  .gt(-45, { error: "Expected an angle above -45°" })
  .lte(45, { error: "Expected an angle of at most 45°" });

export const fragmentShapeSchema = z.enum(["rectangle", "cutout"]);
export type FragmentShape = z.infer<typeof fragmentShapeSchema>;

export const geometrySchema = z.object({
  box: boxSchema,
  angle: angleSchema,
  rect: rectSchema,
  outline: z.array(pointSchema).min(3).max(2000),
  shape: fragmentShapeSchema,
});
export type FragmentGeometry = z.infer<typeof geometrySchema>;

/** One piece found by the split, as the pipeline reports it. */
export const detectedPieceSchema = geometrySchema.extend({
  areaPx: z.number(),
  /** 0–1: how sure the split is that this is one whole piece. */
  confidence: z.number().min(0).max(1),
  sizeIn: z.object({ width: z.number(), height: z.number() }),
  sizeMm: z.object({ width: z.number(), height: z.number() }),
});
export type DetectedPiece = z.infer<typeof detectedPieceSchema>;

export const FRAGMENT_STATUSES = ["proposed", "approved", "rejected"] as const;
export const fragmentStatusSchema = z.enum(FRAGMENT_STATUSES);
export type FragmentStatus = z.infer<typeof fragmentStatusSchema>;

/** A file made for a fragment, as the API shows it. */
export const outputSchema = z.object({
  kind: z.enum(["master", "web"]),
  format: z.string(),
  width: z.number(),
  height: z.number(),
  bitDepth: z.number(),
  hasAlpha: z.boolean(),
  dpi: z.number(),
  bytes: z.number(),
  fileName: z.string(),
  createdAt: z.string(),
  /** When its file was last written (a render, a rights rewrite): a picture of it follows this. */
  updatedAt: z.string(),
});
export type Output = z.infer<typeof outputSchema>;

export const RENDER_STATES = ["none", "queued", "rendering", "done", "failed"] as const;

export const fragmentSchema = geometrySchema.extend({
  id: z.string(),
  scanId: z.string(),
  scanName: z.string(),
  position: z.number(),
  status: fragmentStatusSchema,
  origin: z.enum(["split", "drawn", "merged"]),
  areaPx: z.number(),
  confidence: z.number(),
  sizeIn: z.object({ width: z.number(), height: z.number() }),
  sizeMm: z.object({ width: z.number(), height: z.number() }),
  dpi: z.object({ x: z.number(), y: z.number(), source: dpiSourceSchema }),
  edited: z.boolean(),
  resettable: z.boolean(),
  mergedFrom: z.array(z.string()),
  title: z.string().nullable(),
  tags: z.array(z.string()),
  notes: z.string().nullable(),
  /** The recipe chosen for this fragment itself (null: it follows its scan, intake or the studio default). */
  recipeId: z.string().nullable(),
  revision: z.number(),
  renderState: z.enum(RENDER_STATES),
  renderError: z.string().nullable(),
  outputs: z.array(outputSchema),
  reviewedAt: z.string().nullable(),
  updatedAt: z.string(),
});
export type Fragment = z.infer<typeof fragmentSchema>;

export const fragmentListResponse = z.object({ fragments: z.array(fragmentSchema), total: z.number().optional() });
export const fragmentResponse = z.object({ fragment: fragmentSchema });
/** A scan's failed renders queued again: its fragments as they are now, and how many were queued. */
export const scanRenderRetryResponse = z.object({ fragments: z.array(fragmentSchema), queued: z.number().int() });

const tagSchema = z.string().trim().min(1).max(40);

/** Edit a fragment: its review status, its geometry (rect + angle, shape) or its description. */
export const updateFragmentBody = z
  .object({
    status: fragmentStatusSchema.optional(),
    rect: rectSchema.optional(),
    angle: angleSchema.optional(),
    shape: fragmentShapeSchema.optional(),
    title: z.string().trim().max(200).refine(oneLine("a title").check, oneLine("a title").message).nullable().optional(),
    tags: z.array(tagSchema).max(30).optional(),
    notes: z.string().max(4000).nullable().optional(),
  })
  .refine((b) => Object.keys(b).length > 0, { error: "Expected at least one field to change" });
export type UpdateFragmentBody = z.infer<typeof updateFragmentBody>;

/** Draw a fragment the split missed: its rectangle and angle in scan pixels. */
export const drawFragmentBody = z.object({
  rect: rectSchema,
  angle: angleSchema.default(0),
  shape: fragmentShapeSchema.default("rectangle"),
});

export const mergeFragmentsBody = z.object({
  ids: z
    .array(z.uuid({ error: "Expected fragment ids in UUID form" }))
    .min(2, { error: "Expected at least two fragments to merge" })
    .max(20),
});

export const resplitBody = z.object({
  sensitivity: z.number().min(0, { error: "Expected a sensitivity from 0 to 1" }).max(1, { error: "Expected a sensitivity from 0 to 1" }),
});

export const fragmentOutputParams = z.object({
  id: z.uuid({ error: "Expected an id in UUID form" }),
  kind: z.enum(["master", "web"], { error: "Expected master or web" }),
});

export const fragmentListQuery = z.object({
  status: fragmentStatusSchema.optional(),
  scanId: z.uuid().optional(),
  intakeId: z.uuid().optional(),
  q: z.string().trim().max(200).optional(),
  limit: z.coerce.number().int().min(1).max(500).default(200),
  offset: z.coerce.number().int().min(0).default(0),
});
