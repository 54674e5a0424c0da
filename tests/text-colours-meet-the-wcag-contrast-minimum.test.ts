/**
 * The text colours of the theme against the grounds they are set on reach the contrast minimum for
 * body text: 4.5:1 (WCAG 2.1, success criterion 1.4.3), with contrast ratio (L1 + 0.05) / (L2 + 0.05)
 * and relative luminance L = 0.2126 R + 0.7152 G + 0.0722 B of the linearised sRGB components
 * (WCAG 2.1 definitions; the linearisation is IEC 61966-2-1's, whose threshold WCAG quotes as
 * 0.03928 against the standard's 0.04045: no 8-bit value lies between them).
 */
import { describe, expect, it } from "vitest";
import config from "../tailwind.config";

const colours = (config.theme?.extend?.colors ?? {}) as Record<string, Record<string, string>>;

function luminance(hex: string): number {
  const [r, g, b] = [1, 3, 5].map((i) => {
    const c = parseInt(hex.slice(i, i + 2), 16) / 255;
    return c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4;
  });
  return 0.2126 * r! + 0.7152 * g! + 0.0722 * b!;
}
const ratio = (a: string, b: string) => {
  const [hi, lo] = [luminance(a), luminance(b)].sort((x, y) => y - x);
  return (hi! + 0.05) / (lo! + 0.05);
};

describe("the theme's text colours", () => {
  it("computes the ratio as WCAG defines it: black on white is 21:1, a colour on itself 1:1", () => {
    expect(ratio("#000000", "#ffffff")).toBeCloseTo(21, 6);
    expect(ratio("#777777", "#777777")).toBe(1);
    // #767676 on white is the well-known lightest grey to reach 4.5:1 (4.54:1; value from memory).
    expect(ratio("#767676", "#ffffff")).toBeCloseTo(4.54, 2);
  });

  const grounds = { white: "#ffffff", "paper-50": colours.paper!["50"]!, paper: colours.paper!.DEFAULT! };
  const texts = {
    ink: colours.ink!.DEFAULT!,
    "ink-soft": colours.ink!.soft!,
    "ink-muted": colours.ink!.muted!,
    "accent-strong": colours.accent!.strong!,
    brick: colours.brick!.DEFAULT!,
  };
  for (const [t, fg] of Object.entries(texts))
    for (const [g, bg] of Object.entries(grounds))
      it(`${t} (${fg}) on ${g} (${bg}) reaches 4.5:1`, () => {
        expect(ratio(fg, bg)).toBeGreaterThanOrEqual(4.5);
      });
});
