import { RECIPE_LIMITS, type RecipeStep, type StepType } from "../../../shared/schemas/recipes";
import { formatNumber } from "../../../shared/units";

/**
 * What the editor shows of each step: its name in the screens, a line on what it is for, its
 * modes and its settings, each with the bounds from RECIPE_LIMITS (the schema's own), a step
 * size for the slider and field, and a label in the trade's words.
 */
export interface NumberSetting {
  kind: "number";
  /** The step's own key, as the schema names it (and as its error messages do). */
  key: string;
  label: string;
  hint?: string;
  limits: readonly [number, number];
  /** Slider and arrow-key step. */
  step: number;
  /** Decimals the field shows. */
  decimals: number;
  /** A logarithmic slider, for settings where small values need fine control (gamma, radius). */
  log?: boolean;
  unit?: string;
  /** The same value in a unit people also think in ("≈ 128 of 255"). */
  readout?: (value: number) => string;
  /** Only in these modes (of the step's `mode`). */
  modes?: readonly string[];
  /** Drawn behind the slider's track (the hue wheel for a hue). */
  track?: "hue";
}

export interface TripleSetting {
  kind: "triple";
  key: "point" | "gains";
  label: string;
  hint: string;
  limits: readonly [number, number];
  step: number;
  decimals: number;
  modes: readonly string[];
}

export interface ModeSetting {
  kind: "mode";
  key: "mode" | "channel";
  label: string;
  options: readonly { value: string; label: string; hint: string }[];
}

export type Setting = NumberSetting | TripleSetting | ModeSetting;

export interface StepInfo {
  label: string;
  summary: string;
  settings: readonly Setting[];
}

const L = RECIPE_LIMITS;
const of255 = (v: number) => `≈ ${Math.round(v * 255)} of 255`;
const percent = (v: number) => `${formatNumber(v * 100, 2)} %`;
const signedPercent = (v: number) => `${v > 0 ? "+" : v < 0 ? "−" : ""}${formatNumber(Math.abs(v) * 100, 0)} %`;

export const STEP_INFO: Record<StepType, StepInfo> = {
  whiteBalance: {
    label: "White balance",
    summary: "Makes a known neutral neutral, in linear light; exposure stays.",
    settings: [
      {
        kind: "mode",
        key: "mode",
        label: "Neutral from",
        options: [
          {
            value: "background",
            label: "Scanner bed",
            hint: "The lid or backing around the pieces, as the split measured it",
          },
          {
            value: "point",
            label: "Picked point",
            hint: "A neutral you pick on the before picture",
          },
          { value: "gains", label: "Gains", hint: "Linear multipliers for red, green and blue" },
        ],
      },
      {
        kind: "triple",
        key: "point",
        label: "Neutral point (sRGB, 0–255)",
        hint: "The colour of something that should be grey or white",
        limits: L.whiteBalance.point,
        step: 1,
        decimals: 0,
        modes: ["point"],
      },
      {
        kind: "triple",
        key: "gains",
        label: "Gains (linear)",
        hint: "1 leaves a channel as it is",
        limits: L.whiteBalance.gains,
        step: 0.01,
        decimals: 2,
        modes: ["gains"],
      },
    ],
  },
  levels: {
    label: "Levels",
    summary: "Black point, white point and gamma, for all channels or one.",
    settings: [
      {
        kind: "mode",
        key: "mode",
        label: "Points",
        options: [
          { value: "manual", label: "Set by hand", hint: "Black and white point as you set them" },
          {
            value: "auto",
            label: "From the histogram",
            hint: "Found per fragment, clipping at most the stated share at each end",
          },
        ],
      },
      {
        kind: "mode",
        key: "channel",
        label: "Channel",
        options: [
          { value: "rgb", label: "RGB", hint: "All three channels together" },
          { value: "r", label: "Red", hint: "The red channel only" },
          { value: "g", label: "Green", hint: "The green channel only" },
          { value: "b", label: "Blue", hint: "The blue channel only" },
        ],
      },
      {
        kind: "number",
        key: "black",
        label: "Black point",
        limits: L.levels.black,
        step: 0.001,
        decimals: 3,
        readout: of255,
        modes: ["manual"],
      },
      {
        kind: "number",
        key: "white",
        label: "White point",
        limits: L.levels.white,
        step: 0.001,
        decimals: 3,
        readout: of255,
        modes: ["manual"],
      },
      {
        kind: "number",
        key: "clip",
        label: "Clip at each end",
        hint: "Share of pixels allowed to go to pure black, and as many to pure white",
        limits: L.levels.clip,
        step: 0.0005,
        decimals: 4,
        readout: percent,
        modes: ["auto"],
      },
      {
        kind: "number",
        key: "gamma",
        label: "Gamma",
        hint: "Above 1 lightens the mid-tones, below 1 darkens them",
        limits: L.levels.gamma,
        step: 0.01,
        decimals: 2,
        log: true,
      },
    ],
  },
  contrast: {
    label: "Contrast",
    summary: "An S-curve about a pivot; negative values flatten.",
    settings: [
      {
        kind: "number",
        key: "amount",
        label: "Contrast",
        limits: L.contrast.amount,
        step: 0.01,
        decimals: 2,
        readout: signedPercent,
      },
      {
        kind: "number",
        key: "pivot",
        label: "Pivot",
        hint: "The tone that stays put",
        limits: L.contrast.pivot,
        step: 0.01,
        decimals: 2,
        readout: of255,
      },
    ],
  },
  saturation: {
    label: "Saturation",
    summary: "Chroma in CIELAB; vibrance spares near-neutral and skin-like colours.",
    settings: [
      {
        kind: "number",
        key: "saturation",
        label: "Saturation",
        limits: L.saturation.saturation,
        step: 0.01,
        decimals: 2,
        readout: signedPercent,
      },
      {
        kind: "number",
        key: "vibrance",
        label: "Vibrance",
        hint: "Lifts muted colours most",
        limits: L.saturation.vibrance,
        step: 0.01,
        decimals: 2,
        readout: signedPercent,
      },
    ],
  },
  hueRange: {
    label: "Hue range",
    summary: "Brings back one muted colour (a green, an orange) without touching the rest.",
    settings: [
      {
        kind: "number",
        key: "centre",
        label: "Hue",
        hint: "CIELAB hue angle h°",
        limits: L.hueRange.centre,
        step: 1,
        decimals: 0,
        unit: "°",
        track: "hue",
      },
      {
        kind: "number",
        key: "width",
        label: "Range width",
        limits: L.hueRange.width,
        step: 1,
        decimals: 0,
        unit: "°",
      },
      {
        kind: "number",
        key: "feather",
        label: "Feather",
        hint: "Fades out over this much beyond the range",
        limits: L.hueRange.feather,
        step: 1,
        decimals: 0,
        unit: "°",
      },
      {
        kind: "number",
        key: "hueShift",
        label: "Hue shift",
        limits: L.hueRange.hueShift,
        step: 1,
        decimals: 0,
        unit: "°",
      },
      {
        kind: "number",
        key: "saturation",
        label: "Saturation",
        limits: L.hueRange.saturation,
        step: 0.01,
        decimals: 2,
        readout: signedPercent,
      },
      {
        kind: "number",
        key: "lightness",
        label: "Lightness",
        limits: L.hueRange.lightness,
        step: 0.01,
        decimals: 2,
        readout: signedPercent,
      },
    ],
  },
  blackAndWhite: {
    label: "Black-and-white",
    summary: "Turns near-neutral pieces (newsprint, photocopies) into a clean grey.",
    settings: [
      {
        kind: "mode",
        key: "mode",
        label: "Convert",
        options: [
          {
            value: "auto",
            label: "When near neutral",
            hint: "Only fragments whose colours are almost all grey",
          },
          { value: "always", label: "Always", hint: "Every fragment becomes grey" },
          { value: "never", label: "Never", hint: "Leave colour as it is" },
        ],
      },
      {
        kind: "number",
        key: "chromaThreshold",
        label: "Near-neutral up to",
        hint: "Chroma C*ab that still counts as grey (95 % of the pixels)",
        limits: L.blackAndWhite.chromaThreshold,
        step: 0.5,
        decimals: 1,
        unit: "C*",
        modes: ["auto"],
      },
      {
        kind: "number",
        key: "contrast",
        label: "Grey contrast",
        limits: L.blackAndWhite.contrast,
        step: 0.01,
        decimals: 2,
        readout: signedPercent,
        modes: ["auto", "always"],
      },
    ],
  },
  descreen: {
    label: "Descreen",
    summary: "Softens printed halftone dots at their screen ruling, then restores edges.",
    settings: [
      {
        kind: "number",
        key: "lpi",
        label: "Screen ruling",
        // Common practice, not a standard: typical rulings by kind of print.
        hint: "About 85 LPI for newsprint, 133–150 for magazines, 175 or more for art books",
        limits: L.descreen.lpi,
        step: 1,
        decimals: 0,
        unit: "LPI",
      },
      {
        kind: "number",
        key: "strength",
        label: "Strength",
        limits: L.descreen.strength,
        step: 0.01,
        decimals: 2,
        readout: percent,
      },
    ],
  },
  sharpen: {
    label: "Sharpen",
    summary: "Unsharp mask with its radius on the original, so it means the same at any DPI.",
    settings: [
      {
        kind: "number",
        key: "radiusMm",
        label: "Radius",
        limits: L.sharpen.radiusMm,
        step: 0.01,
        decimals: 2,
        unit: "mm",
        log: true,
      },
      {
        kind: "number",
        key: "amount",
        label: "Amount",
        limits: L.sharpen.amount,
        step: 0.05,
        decimals: 2,
      },
      {
        kind: "number",
        key: "threshold",
        label: "Threshold",
        hint: "Differences smaller than this are left alone (keeps paper grain quiet)",
        limits: L.sharpen.threshold,
        step: 0.005,
        decimals: 3,
        readout: of255,
      },
    ],
  },
};

/** The settings a step shows in its current mode. */
export function visibleSettings(step: RecipeStep): Setting[] {
  const mode = "mode" in step ? step.mode : undefined;
  return STEP_INFO[step.type].settings.filter((s) => s.kind === "mode" || !s.modes || (mode !== undefined && s.modes.includes(mode)));
}

/** A short line for a step in lists: "Levels (from the histogram)". */
export function stepLine(step: RecipeStep): string {
  const info = STEP_INFO[step.type];
  const modeSetting = info.settings.find((s): s is ModeSetting => s.kind === "mode" && s.key === "mode");
  const mode = "mode" in step ? modeSetting?.options.find((o) => o.value === step.mode) : undefined;
  return mode ? `${info.label} (${mode.label.toLowerCase()})` : info.label;
}
