import type { RecipePreview } from "../../../../shared/schemas/recipe-api";
import { Notice } from "../../../components/notice";

/**
 * Above this share of pixels at 0 or 255 in a channel the preview warns. Half a per cent is a
 * common-practice clip limit, the same as the default automatic levels allow.
 */
export const CLIP_WARNING = 0.005;

type Histograms = RecipePreview["histograms"];

/** The largest share of pixels at one end (0 or 255) in any of red, green and blue. */
export function clippedShare(h: Histograms["before"], end: 0 | 255): number {
  const total = h.r.reduce((a, b) => a + b, 0) || 1;
  return Math.max(h.r[end] ?? 0, h.g[end] ?? 0, h.b[end] ?? 0) / total;
}

const sentence = (text: string) => text.charAt(0).toUpperCase() + text.slice(1);

const pct = (v: number) => `${(v * 100).toFixed(v < 0.1 ? 1 : 0)} %`;

/**
 * Says which end clips, by how much, and how much of that the scan already had, so it is clear
 * whether the recipe lost the detail. Nothing when neither end clips.
 */
export function ClippingNote({ clipping, histograms }: { clipping: RecipePreview["clipping"]; histograms: Histograms }) {
  const shadows = clipping.shadows > CLIP_WARNING;
  const highlights = clipping.highlights > CLIP_WARNING;
  if (!shadows && !highlights) return null;
  const parts = [
    shadows && `shadows: ${pct(clipping.shadows)} of the pixels are at 0 in a channel (before: ${pct(clippedShare(histograms.before, 0))})`,
    highlights && `highlights: ${pct(clipping.highlights)} are at 255 in a channel (before: ${pct(clippedShare(histograms.before, 255))})`,
  ].filter(Boolean);
  return (
    <Notice tone="caution" title="Clipping: detail is lost there">
      {sentence(parts.join("; "))}. Lower the contrast or saturation, or move the black or white point.
    </Notice>
  );
}
