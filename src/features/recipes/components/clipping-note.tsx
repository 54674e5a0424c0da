import type { RecipePreview } from "../../../../shared/schemas/recipe-api";
import { Notice } from "../../../components/notice";

/**
 * Above this share of pixels at pure black or pure white (in any channel) the preview warns.
 * Half a per cent is common practice for a clip limit, the same as the default automatic levels.
 */
export const CLIP_WARNING = 0.005;

const pct = (v: number) => `${(v * 100).toFixed(v < 0.1 ? 1 : 0)} %`;

/** Says which end clips and by how much, or nothing when neither does. */
export function ClippingNote({ clipping }: { clipping: RecipePreview["clipping"] }) {
  const shadows = clipping.shadows > CLIP_WARNING;
  const highlights = clipping.highlights > CLIP_WARNING;
  if (!shadows && !highlights) return null;
  const parts = [
    shadows && `${pct(clipping.shadows)} of the pixels go to pure black (shadow detail is lost)`,
    highlights && `${pct(clipping.highlights)} go to pure white (highlight detail is lost)`,
  ].filter(Boolean);
  return (
    <Notice tone="caution" title="Clipping">
      {parts.join("; ")}. Lower the contrast, or move the black or white point, to keep them.
    </Notice>
  );
}
