/** Words for presets, shared by the presets screen and the batch builder. */
import { WEB_ASPECTS, type Preset, type PresetKind } from "../../shared/schemas/presets";

/** The order kinds are listed in: the copies made most often first. */
export const KIND_ORDER: readonly PresetKind[] = ["web", "print", "mockup", "master"];

export const KIND_LABELS: Record<PresetKind, string> = {
  web: "Web",
  print: "Print",
  mockup: "Mock-up",
  master: "Master",
};

export const KIND_HINTS: Record<PresetKind, string> = {
  web: "Screens, social posts and shop listings",
  print: "A page of paper at a print resolution",
  mockup: "The piece framed on a wall, for listings",
  master: "The archival file, full resolution",
};

const PAPER_LABELS: Record<string, string> = {
  letter: "Letter",
  "8x10": "8 × 10 in",
  "11x14": "11 × 14 in",
  "12x16": "12 × 16 in",
  "16x20": "16 × 20 in",
  custom: "Custom",
};

export function paperLabel(name: string): string {
  return PAPER_LABELS[name] ?? name.toUpperCase();
}

/** Box height from its width and aspect, as the worker computes it (4:5 at 1080 → 1350). */
export function boxHeight(width: number, aspect: keyof typeof WEB_ASPECTS): number {
  const [w, h] = WEB_ASPECTS[aspect];
  return Math.round((width * h) / w);
}

/** One line saying what a preset makes: "2048 px long edge · JPEG 90". */
export function presetLine(p: Preset): string {
  switch (p.kind) {
    case "web": {
      const size =
        p.size.mode === "longEdge"
          ? `${p.size.longEdge} px long edge`
          : `${p.size.width} × ${boxHeight(p.size.width, p.size.aspect)} px (${p.size.aspect}, ${p.fit})`;
      return `${size} · ${p.format.toUpperCase()}${p.format === "png" ? "" : ` ${p.quality}`}`;
    }
    case "print": {
      const area =
        p.layout.mode === "area"
          ? `${p.layout.widthIn} × ${p.layout.heightIn} in area`
          : new Set([p.layout.top, p.layout.right, p.layout.bottom, p.layout.left]).size === 1
            ? `${p.layout.top} mm margins`
            : `margins ${p.layout.top}/${p.layout.right}/${p.layout.bottom}/${p.layout.left} mm (top/right/bottom/left)`;
      return `${paperLabel(p.paper.size)} · ${area} · ${p.scale.mode} · ${p.printDpi} DPI ${p.output.toUpperCase()}`;
    }
    case "mockup":
      return `${p.width} × ${p.height} px · frame ${p.frameWidthMm} mm, mat ${p.matWidthMm} mm · ${p.format.toUpperCase()}`;
    case "master":
      return `${p.format.toUpperCase()} · ${p.bitDepth === "source" ? "bit depth as scanned" : `${p.bitDepth}-bit`}${p.keepAlpha ? " · transparency kept" : ""}`;
  }
}

const plural = (n: number, one: string, many = `${one}s`) => `${n} ${n === 1 ? one : many}`;
export { plural };
