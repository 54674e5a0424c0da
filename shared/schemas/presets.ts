import { z } from "zod";
import { oneLine } from "./text";
import { DEFAULT_MIN_DPI, PAPER_NAMES, PLACEMENTS } from "../paper";

/**
 * Output presets: how a master becomes a copy. Kinds: master (archival file), web (screens and
 * shops), print (a page of paper at a print DPI, TIFF or PDF) and mockup (the piece framed on a
 * wall). The one description for client (editor forms), server (API, database) and worker
 * (worker/pipeline/output). Every number has exact bounds in PRESET_LIMITS; errors say what was
 * expected and what came: "Expected quality between 1 and 100 but received 120".
 *
 * Units: pixels (px), millimetres (Mm), inches (In), dots per inch (DPI), degrees (Deg).
 */

/** Bounds of every number in a preset: [min, max]. */
export const PRESET_LIMITS = {
  pixels: [16, 16383],
  quality: [1, 100],
  printDpi: [72, 1200],
  minDpi: [1, 2400],
  marginMm: [0, 200],
  areaIn: [0.5, 120],
  areaMm: [10, 3000],
  customPaperMm: [25, 3000],
  exactIn: [0.1, 120],
  frameMm: [0, 150],
  matMm: [0, 300],
  lightDeg: [0, 360],
  shadow: [0, 1],
} as const;
const L = PRESET_LIMITS;

/** Longest preset name, characters. */
export const MAX_PRESET_NAME = 80;

function describe(input: unknown): string {
  if (input === undefined) return "nothing";
  if (input === null) return "null";
  if (typeof input === "string") return JSON.stringify(input);
  if (typeof input === "number" || typeof input === "boolean") return String(input);
  if (Array.isArray(input)) return `a list of ${input.length}`;
  return typeof input === "object" ? "an object" : `a ${typeof input}`;
}

function bounded(label: string, [min, max]: readonly [number, number], int = false) {
  const range = `Expected ${label} ${int ? "as a whole number " : ""}between ${min} and ${max}`;
  const error = (iss: { input?: unknown }) => `${range} but received ${describe(iss.input)}`;
  const n = z.number({ error }).min(min, { error }).max(max, { error });
  return int ? n.int({ error }) : n;
}

function oneOf<const T extends readonly [string, ...string[]]>(label: string, values: T) {
  return z.enum(values, {
    error: (iss) => `Expected ${label} to be one of ${values.join(", ")} but received ${describe(iss.input)}`,
  });
}

function flag(label: string, fallback: boolean) {
  return z.boolean({ error: (iss) => `Expected ${label} to be true or false but received ${describe(iss.input)}` }).default(fallback);
}

/** A colour as #rrggbb. */
const colour = (label: string, fallback: string) =>
  z
    .string({ error: (iss) => `Expected ${label} as a colour like "#ffffff" but received ${describe(iss.input)}` })
    .regex(/^#[0-9a-fA-F]{6}$/, { error: (iss) => `Expected ${label} as a colour like "#ffffff" but received ${describe(iss.input)}` })
    .default(fallback);

function kind<const K extends string, S extends z.ZodRawShape>(k: K, shape: S) {
  return z.strictObject(
    {
      kind: z.literal(k),
      name: z
        .string({ error: (iss) => `Expected a preset name but received ${describe(iss.input)}` })
        .trim()
        .min(1, { error: "Expected a preset name of at least one character" })
        .max(MAX_PRESET_NAME, { error: `Expected a preset name of at most ${MAX_PRESET_NAME} characters` })
        .refine(oneLine("a preset name").check, oneLine("a preset name").message),
      ...shape,
    },
    {
      error: (iss) =>
        iss.code === "unrecognized_keys" ? `Unknown setting ${iss.keys.map((x) => `"${x}"`).join(", ")} in a ${k} preset` : undefined,
    },
  );
}

/** Archival master: TIFF (LZW, Deflate or none) or PNG (always Deflate), 8 or 16 bits or as the source. */
export const masterPresetSchema = kind("master", {
  format: oneOf("master format", ["tiff", "png"]).default("tiff"),
  bitDepth: z
    .union([z.literal(8), z.literal(16), z.literal("source")], {
      error: (iss) => `Expected bitDepth to be 8, 16 or "source" but received ${describe(iss.input)}`,
    })
    .default("source"),
  /** Default: LZW for TIFF, Deflate for PNG. */
  compression: oneOf("compression", ["lzw", "deflate", "none"]).optional(),
  keepAlpha: flag("keepAlpha", true),
  embedResolution: flag("embedResolution", true),
}).superRefine((p, ctx) => {
  if (p.format === "png" && p.compression === "lzw") {
    ctx.addIssue({
      code: "custom",
      path: ["compression"],
      message: 'Expected compression "deflate" or "none" for PNG (PNG always compresses with Deflate) but received "lzw"',
    });
  }
});

export const WEB_ASPECTS = { "1:1": [1, 1], "4:5": [4, 5], "16:9": [16, 9] } as const;
export type WebAspect = keyof typeof WEB_ASPECTS;

const webSizeSchema = z.discriminatedUnion(
  "mode",
  [
    z.strictObject({ mode: z.literal("longEdge"), longEdge: bounded("longEdge (px)", L.pixels, true) }),
    z.strictObject({
      mode: z.literal("box"),
      aspect: oneOf("aspect", ["1:1", "4:5", "16:9"]),
      /** Width of the box in px; the height follows the aspect (4:5 at 1080 → 1080 × 1350). */
      width: bounded("box width (px)", L.pixels, true),
    }),
  ],
  { error: (iss) => `Expected size { mode: "longEdge", longEdge } or { mode: "box", aspect, width } but received ${describe(iss.input)}` },
);

/** Web copy: a long edge or an exact box, contain (padded) or cover (cropped), 8-bit. */
export const webPresetSchema = kind("web", {
  size: webSizeSchema,
  fit: oneOf("fit", ["contain", "cover"]).default("contain"),
  enlarge: flag("enlarge", false),
  format: oneOf("web format", ["jpeg", "webp", "avif", "png"]).default("jpeg"),
  quality: bounded("quality", L.quality, true).default(90),
  /** Behind transparent pieces and in contain padding; "transparent" only for WebP, AVIF and PNG. */
  background: z.union([z.literal("transparent"), colour("background", "#ffffff")]).default("#ffffff"),
  toSrgb: flag("toSrgb", true),
  /** Fields written into the copy. Location and camera data are never copied. */
  keep: z
    .strictObject({
      title: flag("keep.title", true),
      creator: flag("keep.creator", true),
      copyright: flag("keep.copyright", true),
      resolution: flag("keep.resolution", true),
    })
    .default({ title: true, creator: true, copyright: true, resolution: true }),
}).superRefine((p, ctx) => {
  if (p.background === "transparent" && p.format === "jpeg") {
    ctx.addIssue({
      code: "custom",
      path: ["background"],
      message: 'Expected a colour background for JPEG (it has no transparency) but received "transparent"',
    });
  }
});

const paperSchema = z
  .strictObject({
    size: oneOf("paper", PAPER_NAMES),
    widthMm: bounded("custom paper width (mm)", L.customPaperMm).optional(),
    heightMm: bounded("custom paper height (mm)", L.customPaperMm).optional(),
  })
  .superRefine((p, ctx) => {
    if (p.size === "custom" && (p.widthMm === undefined || p.heightMm === undefined)) {
      ctx.addIssue({ code: "custom", path: ["widthMm"], message: "Expected widthMm and heightMm for a custom paper" });
    }
  });

const layoutSchema = z.discriminatedUnion(
  "mode",
  [
    z.strictObject({
      mode: z.literal("margins"),
      top: bounded("top margin (mm)", L.marginMm),
      right: bounded("right margin (mm)", L.marginMm),
      bottom: bounded("bottom margin (mm)", L.marginMm),
      left: bounded("left margin (mm)", L.marginMm),
    }),
    z.strictObject({
      mode: z.literal("area"),
      widthIn: bounded("print area width (in)", L.areaIn),
      heightIn: bounded("print area height (in)", L.areaIn),
    }),
  ],
  {
    error: (iss) =>
      `Expected layout { mode: "margins", top, right, bottom, left } (mm) or { mode: "area", widthIn, heightIn } but received ${describe(iss.input)}`,
  },
);

const scaleSchema = z.discriminatedUnion(
  "mode",
  [
    z.strictObject({ mode: z.literal("fit") }),
    z.strictObject({ mode: z.literal("fill") }),
    z
      .strictObject({
        mode: z.literal("exact"),
        widthIn: bounded("exact printed width (in)", L.exactIn).optional(),
        heightIn: bounded("exact printed height (in)", L.exactIn).optional(),
      })
      .refine((s) => (s.widthIn === undefined) !== (s.heightIn === undefined), {
        message: "Expected exactly one of widthIn or heightIn for an exact printed size (the other follows the piece's shape)",
      }),
  ],
  {
    error: (iss) =>
      `Expected scale { mode: "fit" }, { mode: "fill" } or { mode: "exact", widthIn | heightIn } but received ${describe(iss.input)}`,
  },
);

/** Print file: the piece on white paper at printDpi, TIFF or PDF; warns below minDpi. */
export const printPresetSchema = kind("print", {
  paper: paperSchema,
  /** "auto" turns the paper to match the piece. */
  orientation: oneOf("orientation", ["portrait", "landscape", "auto"]).default("auto"),
  layout: layoutSchema,
  scale: scaleSchema.default({ mode: "fit" }),
  placement: oneOf("placement", PLACEMENTS).default("centre"),
  printDpi: bounded("printDpi", L.printDpi, true).default(300),
  cropMarks: flag("cropMarks", false),
  caption: flag("caption", false),
  output: oneOf("print output", ["tiff", "pdf"]).default("tiff"),
  minDpi: bounded("minDpi", L.minDpi).default(DEFAULT_MIN_DPI),
});

/** Mock-up: the piece in a frame with a mat, on a lit wall, drawn by code. */
export const mockupPresetSchema = kind("mockup", {
  frameWidthMm: bounded("frame width (mm)", L.frameMm).default(25),
  frameColour: colour("frame colour", "#2b2622"),
  matWidthMm: bounded("mat width (mm)", L.matMm).default(60),
  matColour: colour("mat colour", "#f6f3ec"),
  wallColour: colour("wall colour", "#d9d4cb"),
  /** Where the light comes from, degrees clockwise from straight up (315 = top-left). */
  lightDeg: bounded("light direction (degrees)", L.lightDeg).default(315),
  shadow: bounded("shadow strength", L.shadow).default(0.5),
  width: bounded("mock-up width (px)", L.pixels, true).default(1600),
  height: bounded("mock-up height (px)", L.pixels, true).default(1600),
  format: oneOf("mock-up format", ["jpeg", "webp", "png"]).default("jpeg"),
  quality: bounded("quality", L.quality, true).default(90),
});

export const presetSchema = z.discriminatedUnion("kind", [masterPresetSchema, webPresetSchema, printPresetSchema, mockupPresetSchema], {
  error: (iss) =>
    `Expected a preset kind of master, web, print or mockup but received ${describe((iss.input as { kind?: unknown } | undefined)?.kind)}`,
});

export type MasterPreset = z.infer<typeof masterPresetSchema>;
export type WebPreset = z.infer<typeof webPresetSchema>;
export type PrintPreset = z.infer<typeof printPresetSchema>;
export type MockupPreset = z.infer<typeof mockupPresetSchema>;
export type Preset = z.infer<typeof presetSchema>;
export type PresetInput = z.input<typeof presetSchema>;
export type PresetKind = Preset["kind"];

/** The first problem of a preset as one sentence, naming where: "scale.widthIn: Expected …". */
export function presetProblem(error: z.ZodError): string {
  const issue = error.issues[0]!;
  return issue.path.length > 0 ? `${issue.path.join(".")}: ${issue.message}` : issue.message;
}

/** Parses a preset, throwing an Error whose message is presetProblem's sentence. */
export function parsePreset(input: unknown): Preset {
  const parsed = presetSchema.safeParse(input);
  if (!parsed.success) throw new Error(`Invalid preset: ${presetProblem(parsed.error)}`);
  return parsed.data;
}

const BUILT_IN_INPUTS: readonly PresetInput[] = [
  { kind: "web", name: "web", size: { mode: "longEdge", longEdge: 2048 }, format: "jpeg" },
  { kind: "web", name: "square", size: { mode: "box", aspect: "1:1", width: 1080 }, fit: "contain", background: "#ffffff", format: "jpeg" },
  {
    kind: "print",
    name: "print-letter",
    paper: { size: "letter" },
    layout: { mode: "area", widthIn: 8, heightIn: 10 },
    printDpi: 300,
    scale: { mode: "fit" },
    output: "tiff",
  },
  {
    kind: "print",
    name: "print-a4",
    paper: { size: "a4" },
    layout: { mode: "margins", top: 10, right: 10, bottom: 10, left: 10 },
    printDpi: 300,
    scale: { mode: "fit" },
    output: "tiff",
  },
];

/** The built-in presets by name (web, square, print-letter, print-a4); studios edit copies of them. */
export const BUILT_IN_PRESETS: Readonly<Record<string, Preset>> = Object.freeze(
  Object.fromEntries(BUILT_IN_INPUTS.map((p) => [p.name, presetSchema.parse(p)])),
);

/** Each kind in a sentence ("the mock-up preset"). */
export const KIND_WORDS: Record<PresetKind, string> = { web: "web", print: "print", mockup: "mock-up", master: "master" };
