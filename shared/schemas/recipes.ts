import { z } from "zod";
import { oneLine } from "./text";

/**
 * Colour recipes: an ordered list of colour steps applied to every fragment the same way.
 * The one description of a recipe for client (editor forms), server (API, database) and worker
 * (the compiler in worker/pipeline/colour). Every number has exact bounds, listed in
 * RECIPE_LIMITS so the editor's sliders use the same ones, and every error says what was
 * expected and what came: "Expected gamma between 0.1 and 10 but received 12".
 *
 * Units: tone values (black, white, pivot, threshold) are fractions 0–1 of full scale of the
 * sRGB-encoded value (0.5 ≈ 128 of 255); angles are degrees of CIELAB hue h_ab; chroma is
 * C*ab; lengths are millimetres on the original; screen rulings are lines per inch.
 */

/** Bounds of every number in a recipe: [min, max]. Example: RECIPE_LIMITS.levels.gamma → [0.1, 10]. */
export const RECIPE_LIMITS = {
  whiteBalance: { point: [0, 255], gains: [0.25, 4] },
  levels: { black: [0, 1], white: [0, 1], gamma: [0.1, 10], clip: [0, 0.05] },
  contrast: { amount: [-1, 1], pivot: [0.1, 0.9] },
  saturation: { saturation: [-1, 1], vibrance: [-1, 1] },
  hueRange: {
    centre: [0, 360],
    width: [0, 180],
    feather: [0, 90],
    hueShift: [-90, 90],
    saturation: [-1, 1],
    lightness: [-1, 1],
  },
  blackAndWhite: { chromaThreshold: [0, 30], contrast: [-1, 1] },
  descreen: { lpi: [30, 300], strength: [0, 1] },
  sharpen: { radiusMm: [0.02, 2], amount: [0, 5], threshold: [0, 0.2] },
} as const;

/** Smallest gap between a levels black and white point (fraction of full scale). */
export const MIN_LEVELS_RANGE = 0.01;
/** Longest recipe name, characters. */
export const MAX_RECIPE_NAME = 80;
/** Most steps in one recipe. */
export const MAX_RECIPE_STEPS = 32;

function describe(input: unknown): string {
  if (input === undefined) return "nothing";
  if (input === null) return "null";
  if (typeof input === "string") return JSON.stringify(input);
  if (typeof input === "number" || typeof input === "boolean") return String(input);
  if (Array.isArray(input)) return `a list of ${input.length}`;
  return typeof input === "object" ? "an object" : `a ${typeof input}`;
}

/** A number within [min, max] whose errors name it. */
function bounded(label: string, [min, max]: readonly [number, number]) {
  const range = `Expected ${label} between ${min} and ${max}`;
  return z
    .number({ error: (iss) => `${range} but received ${describe(iss.input)}` })
    .min(min, { error: (iss) => `${range} but received ${describe(iss.input)}` })
    .max(max, { error: (iss) => `${range} but received ${describe(iss.input)}` });
}

function oneOf<const T extends readonly [string, ...string[]]>(label: string, values: T) {
  return z.enum(values, {
    error: (iss) => `Expected ${label} to be one of ${values.join(", ")} but received ${describe(iss.input)}`,
  });
}

function triple(label: string, limits: readonly [number, number]) {
  return z.tuple([bounded(`${label} red`, limits), bounded(`${label} green`, limits), bounded(`${label} blue`, limits)], {
    error: (iss) => `Expected ${label} as three numbers [red, green, blue] but received ${describe(iss.input)}`,
  });
}

const enabled = z.boolean({ error: (iss) => `Expected enabled to be true or false but received ${describe(iss.input)}` }).default(true);

/** A step object that names any setting it does not know. */
function step<const T extends string, S extends z.ZodRawShape>(type: T, shape: S) {
  return z.strictObject(
    { type: z.literal(type), enabled, ...shape },
    {
      error: (iss) =>
        iss.code === "unrecognized_keys" ? `Unknown setting ${iss.keys.map((k) => `"${k}"`).join(", ")} in a ${type} step` : undefined,
    },
  );
}

const L = RECIPE_LIMITS;

/**
 * White balance, in linear light: per-channel gains that make a known neutral neutral.
 * - background: the scanner bed around the pieces (a white lid or black backing), as measured by the split;
 * - point: `point`, the 8-bit sRGB colour of a neutral picked on the "before" preview;
 * - gains: `gains`, linear multipliers for red, green and blue.
 * The neutral keeps its luminance (Y): white balance changes colour, not exposure.
 */
export const whiteBalanceStepSchema = step("whiteBalance", {
  mode: oneOf("white balance mode", ["background", "point", "gains"]).default("background"),
  point: triple("point", L.whiteBalance.point).optional(),
  gains: triple("gains", L.whiteBalance.gains).optional(),
}).superRefine((s, ctx) => {
  if (s.mode === "point" && !s.point) {
    ctx.addIssue({
      code: "custom",
      path: ["point"],
      message: "Expected point, the sRGB colour [red, green, blue] (0–255) of a picked neutral, for white balance from a point",
    });
  }
  if (s.mode === "gains" && !s.gains) {
    ctx.addIssue({
      code: "custom",
      path: ["gains"],
      message: "Expected gains [red, green, blue] (linear multipliers) for white balance from gains",
    });
  }
});

/**
 * Levels: black point, white point and gamma, for the three channels together or one of them.
 * Black and white are on the encoded scale the histogram shows (0–1); the stretch between them
 * is done in linear light, then gamma: the normalised linear value t becomes t^(1/gamma)
 * (gamma above 1 lightens the mid-tones). `auto` finds black and white from the histogram,
 * letting at most `clip` of the pixels go to pure black and as many to pure white.
 */
export const levelsStepSchema = step("levels", {
  mode: oneOf("levels mode", ["manual", "auto"]).default("manual"),
  channel: oneOf("levels channel", ["rgb", "r", "g", "b"]).default("rgb"),
  black: bounded("black", L.levels.black).default(0),
  white: bounded("white", L.levels.white).default(1),
  gamma: bounded("gamma", L.levels.gamma).default(1),
  clip: bounded("clip", L.levels.clip).default(0.005),
}).superRefine((s, ctx) => {
  if (s.mode === "manual" && !(s.white - s.black >= MIN_LEVELS_RANGE - 1e-12)) {
    ctx.addIssue({
      code: "custom",
      path: ["white"],
      message: `Expected white (${s.white}) at least ${MIN_LEVELS_RANGE} above black (${s.black})`,
    });
  }
});

/** Contrast: an S-shaped tone curve (amount > 0) or its inverse (amount < 0) turning around `pivot`, per channel on encoded values. */
export const contrastStepSchema = step("contrast", {
  amount: bounded("amount", L.contrast.amount).default(0),
  pivot: bounded("pivot", L.contrast.pivot).default(0.5),
});

/**
 * Saturation and vibrance in CIELAB LCh: saturation scales every colour's chroma by
 * (1 + saturation); vibrance does the same, weighted towards moderately muted colours, sparing
 * near-neutral ones and skin-like hues.
 */
export const saturationStepSchema = step("saturation", {
  saturation: bounded("saturation", L.saturation.saturation).default(0),
  vibrance: bounded("vibrance", L.saturation.vibrance).default(0),
});

/**
 * A targeted adjustment of one range of hues (CIELAB h_ab, degrees): hues within width/2 of
 * `centre` get the full change, fading to none over `feather` degrees beyond. Near-neutral
 * colours are left alone (they have no reliable hue).
 */
export const hueRangeStepSchema = step("hueRange", {
  centre: bounded("centre", L.hueRange.centre),
  width: bounded("width", L.hueRange.width).default(30),
  feather: bounded("feather", L.hueRange.feather).default(15),
  hueShift: bounded("hueShift", L.hueRange.hueShift).default(0),
  saturation: bounded("saturation", L.hueRange.saturation).default(0),
  lightness: bounded("lightness", L.hueRange.lightness).default(0),
});

/**
 * Black-and-white handling: `auto` converts a fragment whose colours are all near neutral
 * (95 % of its pixels within `chromaThreshold` of C*ab = 0) to a clean grey, with its own
 * contrast; `always` converts every fragment, `never` none.
 */
export const blackAndWhiteStepSchema = step("blackAndWhite", {
  mode: oneOf("black-and-white mode", ["auto", "always", "never"]).default("auto"),
  chromaThreshold: bounded("chromaThreshold", L.blackAndWhite.chromaThreshold).default(6),
  contrast: bounded("contrast", L.blackAndWhite.contrast).default(0),
});

/** Descreen: softens printed halftone dots at a screen ruling of `lpi` lines per inch, then restores edges. */
export const descreenStepSchema = step("descreen", {
  lpi: bounded("lpi", L.descreen.lpi).default(150),
  strength: bounded("strength", L.descreen.strength).default(1),
});

/** Sharpen: an unsharp mask of radius `radiusMm` millimetres on the original, so it means the same at any DPI. */
export const sharpenStepSchema = step("sharpen", {
  radiusMm: bounded("radiusMm", L.sharpen.radiusMm).default(0.1),
  amount: bounded("amount", L.sharpen.amount).default(1),
  threshold: bounded("threshold", L.sharpen.threshold).default(0.01),
});

export const STEP_TYPES = ["whiteBalance", "levels", "contrast", "saturation", "hueRange", "blackAndWhite", "descreen", "sharpen"] as const;
export type StepType = (typeof STEP_TYPES)[number];

export const recipeStepSchema = z.discriminatedUnion(
  "type",
  [
    whiteBalanceStepSchema,
    levelsStepSchema,
    contrastStepSchema,
    saturationStepSchema,
    hueRangeStepSchema,
    blackAndWhiteStepSchema,
    descreenStepSchema,
    sharpenStepSchema,
  ],
  {
    error: (iss) => {
      const input = iss.input as { type?: unknown } | undefined;
      return input && typeof input === "object"
        ? `Expected a step type of ${STEP_TYPES.join(", ")} but received ${describe(input.type)}`
        : `Expected a step object such as { "type": "levels" } but received ${describe(iss.input)}`;
    },
  },
);

export const recipeSchema = z.strictObject(
  {
    name: z
      .string({ error: (iss) => `Expected a recipe name but received ${describe(iss.input)}` })
      .trim()
      .min(1, { error: "Expected a recipe name of at least one character" })
      .max(MAX_RECIPE_NAME, { error: `Expected a recipe name of at most ${MAX_RECIPE_NAME} characters` })
      .refine(oneLine("a recipe name").check, oneLine("a recipe name").message),
    steps: z
      .array(recipeStepSchema, { error: (iss) => `Expected steps as a list but received ${describe(iss.input)}` })
      .max(MAX_RECIPE_STEPS, { error: `Expected at most ${MAX_RECIPE_STEPS} steps` }),
  },
  {
    error: (iss) =>
      iss.code === "unrecognized_keys"
        ? `Unknown setting ${iss.keys.map((k) => `"${k}"`).join(", ")} in a recipe (a recipe has a name and steps)`
        : iss.code === "invalid_type"
          ? `Expected a recipe object { "name": …, "steps": […] } but received ${describe(iss.input)}`
          : undefined,
  },
);

/** A recipe as stored and applied: every default filled in. */
export type Recipe = z.output<typeof recipeSchema>;
/** A recipe as typed or sent: defaults may be left out. */
export type RecipeInput = z.input<typeof recipeSchema>;
export type RecipeStep = Recipe["steps"][number];
export type StepOf<T extends StepType> = Extract<RecipeStep, { type: T }>;
export type WhiteBalanceStep = StepOf<"whiteBalance">;
export type LevelsStep = StepOf<"levels">;
export type ContrastStep = StepOf<"contrast">;
export type SaturationStep = StepOf<"saturation">;
export type HueRangeStep = StepOf<"hueRange">;
export type BlackAndWhiteStep = StepOf<"blackAndWhite">;
export type DescreenStep = StepOf<"descreen">;
export type SharpenStep = StepOf<"sharpen">;

/** The name the studio default recipe ships under. */
export const DEFAULT_RECIPE_NAME = "default";

/**
 * The studio default, applied when a fragment has no recipe: white balance from the scan's own
 * background, then automatic levels (0.5 % clipped at each end).
 */
export const defaultRecipe: Recipe = recipeSchema.parse({
  name: DEFAULT_RECIPE_NAME,
  steps: [
    { type: "whiteBalance", mode: "background" },
    { type: "levels", mode: "auto", channel: "rgb", clip: 0.005 },
  ],
});

/** Recipes that ship with Platen, by name. */
export const BUILT_IN_RECIPES: Readonly<Record<string, Recipe>> = { [DEFAULT_RECIPE_NAME]: defaultRecipe };

/**
 * A new step of `type` with every setting at its default (the editor's "add a step").
 * Example: newStep("levels") → { type: "levels", enabled: true, mode: "manual", channel: "rgb", black: 0, white: 1, gamma: 1, clip: 0.005 }.
 */
export function newStep(type: StepType): RecipeStep {
  return recipeStepSchema.parse(type === "hueRange" ? { type, centre: 130 } : { type });
}

/**
 * One line for a person from a failed recipe parse: which step, which setting, what was wrong.
 * Example: "step 2 (levels): Expected gamma between 0.1 and 10 but received 12".
 */
export function describeRecipeError(error: z.ZodError, input?: unknown): string {
  const issue = error.issues[0];
  if (!issue) return "The recipe is not valid";
  const [head, index] = issue.path;
  if (head === "steps" && typeof index === "number") {
    const steps = (input as { steps?: unknown[] } | undefined)?.steps;
    const type = (steps?.[index] as { type?: unknown } | undefined)?.type;
    const label = typeof type === "string" && (STEP_TYPES as readonly string[]).includes(type) ? ` (${type})` : "";
    return `step ${index + 1}${label}: ${issue.message}`;
  }
  return issue.message;
}
