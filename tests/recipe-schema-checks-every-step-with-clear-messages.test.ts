/**
 * The recipe schema (shared/schemas/recipes.ts): every step type, its defaults and bounds, and
 * errors that say what was expected and what came.
 */
import { describe, expect, it } from "vitest";
import {
  BUILT_IN_RECIPES,
  defaultRecipe,
  describeRecipeError,
  newStep,
  RECIPE_LIMITS,
  recipeSchema,
  recipeStepSchema,
  STEP_TYPES,
} from "../shared/schemas/recipes";

function firstError(input: unknown): string {
  const r = recipeSchema.safeParse(input);
  if (r.success) throw new Error("expected the recipe to be refused");
  return describeRecipeError(r.error, input);
}

describe("the recipe schema checks every step with clear messages", () => {
  it("ships the studio default: white balance from the background, then automatic levels", () => {
    expect(defaultRecipe.name).toBe("default");
    expect(defaultRecipe.steps).toEqual([
      { type: "whiteBalance", enabled: true, mode: "background" },
      { type: "levels", enabled: true, mode: "auto", channel: "rgb", black: 0, white: 1, gamma: 1, clip: 0.005 },
    ]);
    expect(BUILT_IN_RECIPES.default).toBe(defaultRecipe);
  });

  it("fills in every default of every step type", () => {
    for (const type of STEP_TYPES) {
      const step = newStep(type);
      expect(step.type).toBe(type);
      expect(step.enabled).toBe(true);
      expect(recipeStepSchema.parse(step)).toEqual(step);
    }
    expect(newStep("sharpen")).toEqual({ type: "sharpen", enabled: true, radiusMm: 0.1, amount: 1, threshold: 0.01 });
    expect(newStep("descreen")).toEqual({ type: "descreen", enabled: true, lpi: 150, strength: 1 });
  });

  it.each([
    [{ type: "levels", gamma: 12 }, "step 1 (levels): Expected gamma between 0.1 and 10 but received 12"],
    [{ type: "levels", gamma: 0.05 }, "step 1 (levels): Expected gamma between 0.1 and 10 but received 0.05"],
    [{ type: "levels", gamma: "2" }, 'step 1 (levels): Expected gamma between 0.1 and 10 but received "2"'],
    [{ type: "levels", black: 0.6, white: 0.5 }, "step 1 (levels): Expected white (0.5) at least 0.01 above black (0.6)"],
    [{ type: "levels", mode: "auto", clip: 0.2 }, "step 1 (levels): Expected clip between 0 and 0.05 but received 0.2"],
    [{ type: "levels", channel: "alpha" }, 'step 1 (levels): Expected levels channel to be one of rgb, r, g, b but received "alpha"'],
    [{ type: "contrast", amount: 1.5 }, "step 1 (contrast): Expected amount between -1 and 1 but received 1.5"],
    [{ type: "saturation", vibrance: -2 }, "step 1 (saturation): Expected vibrance between -1 and 1 but received -2"],
    [{ type: "hueRange" }, "step 1 (hueRange): Expected centre between 0 and 360 but received nothing"],
    [{ type: "hueRange", centre: 400 }, "step 1 (hueRange): Expected centre between 0 and 360 but received 400"],
    [{ type: "blackAndWhite", chromaThreshold: 31 }, "step 1 (blackAndWhite): Expected chromaThreshold between 0 and 30 but received 31"],
    [{ type: "descreen", lpi: 20 }, "step 1 (descreen): Expected lpi between 30 and 300 but received 20"],
    [{ type: "sharpen", radiusMm: 3 }, "step 1 (sharpen): Expected radiusMm between 0.02 and 2 but received 3"],
    [
      { type: "whiteBalance", mode: "point" },
      "step 1 (whiteBalance): Expected point, the sRGB colour [red, green, blue] (0–255) of a picked neutral, for white balance from a point",
    ],
    [
      { type: "whiteBalance", mode: "gains", gains: [1, 1, 5] },
      "step 1 (whiteBalance): Expected gains blue between 0.25 and 4 but received 5",
    ],
    [
      { type: "whiteBalance", mode: "gains", gains: [1, 1] },
      "step 1 (whiteBalance): Expected gains as three numbers [red, green, blue] but received a list of 2",
    ],
    [
      { type: "whiteBalance", mode: "sunlight" },
      'step 1 (whiteBalance): Expected white balance mode to be one of background, point, gains but received "sunlight"',
    ],
    [{ type: "levels", gama: 2 }, 'step 1 (levels): Unknown setting "gama" in a levels step'],
    [
      { type: "curves" },
      'step 1: Expected a step type of whiteBalance, levels, contrast, saturation, hueRange, blackAndWhite, descreen, sharpen but received "curves"',
    ],
    [{ type: "sharpen", enabled: "yes" }, 'step 1 (sharpen): Expected enabled to be true or false but received "yes"'],
  ])("refuses %j: %s", (step, message) => {
    expect(firstError({ name: "r", steps: [step] })).toBe(message);
  });

  it("names the position of a bad step among good ones", () => {
    expect(firstError({ name: "r", steps: [{ type: "contrast" }, { type: "levels", gamma: 12 }] })).toBe(
      "step 2 (levels): Expected gamma between 0.1 and 10 but received 12",
    );
  });

  it("refuses a recipe without a name, with unknown settings or that is not an object", () => {
    expect(firstError({ steps: [] })).toBe("Expected a recipe name but received nothing");
    expect(firstError({ name: "  ", steps: [] })).toBe("Expected a recipe name of at least one character");
    expect(firstError({ name: "r", steps: [], colour: 1 })).toBe('Unknown setting "colour" in a recipe (a recipe has a name and steps)');
    expect(firstError([1, 2])).toBe('Expected a recipe object { "name": …, "steps": […] } but received a list of 2');
    expect(firstError({ name: "r", steps: {} })).toBe("Expected steps as a list but received an object");
  });

  it("takes every bound in RECIPE_LIMITS exactly: both ends are accepted, just outside is not", () => {
    const probe = { levels: "gamma", contrast: "amount", sharpen: "radiusMm", descreen: "lpi" } as const;
    for (const [type, key] of Object.entries(probe) as [keyof typeof probe, string][]) {
      const [min, max] = (RECIPE_LIMITS[type] as Record<string, readonly [number, number]>)[key]!;
      for (const v of [min, max]) expect(recipeStepSchema.safeParse({ type, [key]: v }).success).toBe(true);
      for (const v of [min - 1e-9, max + 1e-9]) expect(recipeStepSchema.safeParse({ type, [key]: v }).success).toBe(false);
    }
  });

  it("keeps a disabled step in place", () => {
    const r = recipeSchema.parse({ name: "r", steps: [{ type: "sharpen", enabled: false }] });
    expect(r.steps[0]).toMatchObject({ type: "sharpen", enabled: false });
  });
});
