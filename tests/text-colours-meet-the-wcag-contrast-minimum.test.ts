/**
 * The text colours of the theme against the grounds they are set on reach the contrast minimum for
 * body text: 4.5:1 (WCAG 2.1, success criterion 1.4.3), with contrast ratio (L1 + 0.05) / (L2 + 0.05)
 * and relative luminance L = 0.2126 R + 0.7152 G + 0.0722 B of the linearised sRGB components
 * (WCAG 2.1 definitions; the linearisation is IEC 61966-2-1's, whose threshold WCAG quotes as
 * 0.03928 against the standard's 0.04045: no 8-bit value lies between them).
 */
import fs from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import config from "../tailwind.config";
import { COLOURS as MAIL } from "../server/mail/layout";

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

  // paper-200 is the ground of chips, table heads and the hovered row, where muted notes are set.
  const grounds = {
    white: "#ffffff",
    "paper-50": colours.paper!["50"]!,
    paper: colours.paper!.DEFAULT!,
    "paper-200": colours.paper!["200"]!,
  };
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

  // A tone's text on its own soft ground (warnings, failures, the selected state).
  for (const tone of ["ochre", "brick", "accent"]) {
    const fg = tone === "accent" ? colours.accent!.strong! : colours[tone]!.DEFAULT!;
    for (const ground of ["soft", ...(tone === "accent" ? ["faint"] : [])]) {
      const bg = colours[tone]![ground]!;
      it(`${tone} text (${fg}) on ${tone}-${ground} (${bg}) reaches 4.5:1`, () => {
        expect(ratio(fg, bg)).toBeGreaterThanOrEqual(4.5);
      });
    }
  }
  // Muted notes on the tones' soft grounds (a hint inside a warning or a selected row).
  for (const ground of ["ochre", "brick", "accent"])
    it(`ink-muted on ${ground}-soft reaches 4.5:1`, () => {
      expect(ratio(colours.ink!.muted!, colours[ground]!.soft!)).toBeGreaterThanOrEqual(4.5);
    });

  // E-mail carries its own copy of the palette (no stylesheet reaches a mail client).
  for (const t of ["ink", "soft", "muted", "accent", "brick"] as const)
    for (const g of ["ground", "sheet"] as const)
      it(`e-mail ${t} (${MAIL[t]}) on its ${g} (${MAIL[g]}) reaches 4.5:1`, () => {
        expect(ratio(MAIL[t], MAIL[g])).toBeGreaterThanOrEqual(4.5);
      });
  it("e-mail warnings and failures are readable on their soft grounds", () => {
    expect(ratio(MAIL.ochre, MAIL.ochreSoft)).toBeGreaterThanOrEqual(4.5);
    expect(ratio(MAIL.brick, MAIL.brickSoft)).toBeGreaterThanOrEqual(4.5);
  });

  // ink-faint is for what is not read as text: icons, borders, disabled controls and the very
  // large 404 figure. Those need 3:1 (WCAG 2.1 SC 1.4.11 non-text contrast; SC 1.4.3 for large text).
  for (const [g, bg] of Object.entries(grounds))
    it(`ink-faint (${colours.ink!.faint}) on ${g} (${bg}) reaches 3:1 for icons, borders and large figures`, () => {
      expect(ratio(colours.ink!.faint!, bg)).toBeGreaterThanOrEqual(3);
    });
});

describe("where the faint ink is used", () => {
  /** Every .tsx file under src/. */
  function sources(dir: string): string[] {
    return fs.readdirSync(dir, { withFileTypes: true }).flatMap((e) => {
      const full = path.join(dir, e.name);
      return e.isDirectory() ? sources(full) : e.name.endsWith(".tsx") ? [full] : [];
    });
  }
  it("is never the colour of text people read: only of icons (hidden from reading), disabled controls and the 404 figure", () => {
    const misuses: string[] = [];
    for (const file of sources(path.resolve("src"))) {
      const text = fs.readFileSync(file, "utf8");
      // Text coloured faint, other than while disabled (WCAG 2.1 exempts inactive controls).
      for (const m of text.matchAll(/(^|[\s"'`(])(placeholder:)?text-ink-faint/gm)) {
        const at = m.index + m[1]!.length;
        if (text.slice(Math.max(0, at - 9), at) === "disabled:") continue;
        // The element the class is on: from its "<" to the ">" that ends its opening tag.
        const tag = text.slice(text.lastIndexOf("<", at), text.indexOf(">", at) + 1);
        const allowed = /aria-hidden="true"/.test(tag) || tag.startsWith("<svg") || /text-5xl/.test(tag);
        if (!allowed)
          misuses.push(`${path.relative(process.cwd(), file)}:${text.slice(0, at).split("\n").length}: ${tag.replace(/\s+/g, " ")}`);
      }
    }
    expect(misuses).toEqual([]);
  });
});
