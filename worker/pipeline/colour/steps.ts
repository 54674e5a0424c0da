/**
 * Each point step of a recipe, resolved against what was measured, as a PointOp (curves, a
 * colour function, a grey form) plus a one-line account of what it does. Pure: the same step,
 * measurements and background give the same op, at any size — which is what makes a preview
 * on a reduced copy match the full-resolution master.
 */
import type { BlackAndWhiteStep, LevelsStep, RecipeStep, WhiteBalanceStep } from "../../../shared/schemas/recipes";
import { RecipeError } from "./errors";
import { channelOp, type Curve, type PointOp } from "./lut";
import { adjustHueRange, saturate, toGrey } from "./perceptual";
import type { Vec3 } from "./space";
import { contrastCurve, levelsCurve, whiteBalanceCurve, whiteBalanceGains } from "./tone";

/** What an automatic step measured on the image as it reached that step. */
export type StepStats = { kind: "levels"; black: Vec3; white: Vec3 } | { kind: "blackAndWhite"; chromaP95: number };

export interface ResolvedStep {
  /** The op, or null when the step leaves this image alone (B&W on a colourful fragment, …). */
  op: PointOp | null;
  /** For people: "white balance: gains 0.952 1.000 1.118 (from the background sRGB 243 240 231)". */
  summary: string;
  /** The step turns the image grey (a black-and-white conversion). */
  makesGrey: boolean;
  /** The step can tint a grey image (white balance, one-channel levels). */
  tints: boolean;
}

export interface StepContext {
  background?: readonly [number, number, number];
  /** The image is grey (1 or 2 channels). */
  grey: boolean;
}

const fmt = (v: number, digits = 3) => String(Math.round(v * 10 ** digits) / 10 ** digits);
const identity: Curve = (x) => x;

export const POINT_STEPS = new Set<RecipeStep["type"]>(["whiteBalance", "levels", "contrast", "saturation", "hueRange", "blackAndWhite"]);

/** Whether a step needs statistics of the image to be resolved. */
export function needsStats(step: RecipeStep): boolean {
  return step.enabled && ((step.type === "levels" && step.mode === "auto") || (step.type === "blackAndWhite" && step.mode === "auto"));
}

function whiteBalance(step: WhiteBalanceStep, ctx: StepContext): ResolvedStep {
  let gains: Vec3;
  let from: string;
  if (step.mode === "background") {
    if (!ctx.background) {
      throw new RecipeError(
        "no_background",
        "White balance from the background needs the scanner background's colour, and none was measured for this image; use a picked point or explicit gains instead",
      );
    }
    gains = whiteBalanceGains(ctx.background);
    from = `the background sRGB ${ctx.background.map((v) => fmt(v, 1)).join(" ")}`;
  } else if (step.mode === "point") {
    gains = whiteBalanceGains(step.point!);
    from = `the picked point sRGB ${step.point!.join(" ")}`;
  } else {
    gains = [...step.gains!] as Vec3;
    from = "explicit gains";
  }
  const curves = gains.map((g) => (x: number) => whiteBalanceCurve(x, g)) as [Curve, Curve, Curve];
  return {
    op: ctx.grey ? null : channelOp(curves, null),
    summary: `white balance: gains ${gains.map((g) => fmt(g)).join(" ")} (from ${from})${ctx.grey ? "; skipped on a grey image" : ""}`,
    makesGrey: false,
    tints: !ctx.grey && gains.some((g) => Math.abs(g - gains[0]) > 1e-9),
  };
}

const CHANNEL_INDEX = { r: 0, g: 1, b: 2 } as const;

function levels(step: LevelsStep, stats: StepStats | null, ctx: StepContext): ResolvedStep {
  let black: Vec3;
  let white: Vec3;
  if (step.mode === "auto") {
    if (stats?.kind !== "levels") throw new Error("Automatic levels were not measured");
    black = stats.black;
    white = stats.white;
  } else {
    black = [step.black, step.black, step.black];
    white = [step.white, step.white, step.white];
  }
  const only = step.channel === "rgb" ? null : CHANNEL_INDEX[step.channel];
  const curve = (c: number): Curve => (only !== null && c !== only ? identity : (x) => levelsCurve(x, black[c]!, white[c]!, step.gamma));
  const grey = step.channel === "rgb" ? curve(0) : null;
  const shown = only === null ? [0, 1, 2] : [only];
  const points = shown.map((c) => `${fmt(black[c]!)}–${fmt(white[c]!)}`).join(" ");
  return {
    op: ctx.grey ? (grey ? channelOp([grey, grey, grey], grey) : null) : channelOp([curve(0), curve(1), curve(2)], grey),
    summary: `levels (${step.channel}${step.mode === "auto" ? `, auto, ≤ ${fmt(step.clip * 100, 2)} % clipped at each end` : ""}): black–white ${points}, gamma ${fmt(step.gamma)}`,
    makesGrey: false,
    tints: only !== null && !ctx.grey,
  };
}

function blackAndWhite(step: BlackAndWhiteStep, stats: StepStats | null, ctx: StepContext): ResolvedStep {
  let convert: boolean;
  let why: string;
  if (step.mode === "never") {
    convert = false;
    why = "never";
  } else if (step.mode === "always" || ctx.grey) {
    convert = true;
    why = ctx.grey ? "the image is grey" : "always";
  } else {
    if (stats?.kind !== "blackAndWhite") throw new Error("Black-and-white detection was not measured");
    convert = stats.chromaP95 <= step.chromaThreshold;
    why = `95 % of pixels within C*ab ${fmt(stats.chromaP95, 1)}, threshold ${fmt(step.chromaThreshold, 1)}`;
  }
  if (!convert) return { op: null, summary: `black and white: left in colour (${why})`, makesGrey: false, tints: false };
  const greyCurve: Curve = (x) => toGrey([x, x, x], step.contrast)[0];
  return {
    op: { curves: null, colour: (rgb) => toGrey(rgb, step.contrast), grey: greyCurve },
    summary: `black and white: converted to grey, contrast ${fmt(step.contrast)} (${why})`,
    makesGrey: true,
    tints: false,
  };
}

/**
 * Resolves one enabled point step. Throws RecipeError (no_background) when white balance from
 * the background has none to work from.
 * Example: resolvePointStep({ type: "contrast", enabled: true, amount: 0.3, pivot: 0.5 }, null, { grey: false }).summary
 *   → "contrast: amount 0.3 about 0.5".
 */
export function resolvePointStep(step: RecipeStep, stats: StepStats | null, ctx: StepContext): ResolvedStep {
  switch (step.type) {
    case "whiteBalance":
      return whiteBalance(step, ctx);
    case "levels":
      return levels(step, stats, ctx);
    case "contrast": {
      const c: Curve = (x) => contrastCurve(x, step.amount, step.pivot);
      return {
        op: channelOp([c, c, c], c),
        summary: `contrast: amount ${fmt(step.amount)} about ${fmt(step.pivot)}`,
        makesGrey: false,
        tints: false,
      };
    }
    case "saturation":
      return {
        op: ctx.grey ? null : { curves: null, colour: (rgb) => saturate(rgb, step), grey: null },
        summary: `saturation ${fmt(step.saturation)}, vibrance ${fmt(step.vibrance)}${ctx.grey ? "; skipped on a grey image" : ""}`,
        makesGrey: false,
        tints: false,
      };
    case "hueRange":
      return {
        op: ctx.grey ? null : { curves: null, colour: (rgb) => adjustHueRange(rgb, step), grey: null },
        summary: `hue range ${fmt(step.centre, 1)}° ± ${fmt(step.width / 2, 1)}° (feather ${fmt(step.feather, 1)}°): hue ${fmt(step.hueShift, 1)}°, saturation ${fmt(step.saturation)}, lightness ${fmt(step.lightness)}${ctx.grey ? "; skipped on a grey image" : ""}`,
        makesGrey: false,
        tints: false,
      };
    case "blackAndWhite":
      return blackAndWhite(step, stats, ctx);
    default:
      throw new Error(`${step.type} is not a point step`);
  }
}
