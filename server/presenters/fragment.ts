import type { Fragment, Output } from "../../shared/schemas/fragments";
import { MM_PER_INCH } from "../../shared/units";
import type { fragments, outputs, scans } from "../db/schema";

type FragmentRow = typeof fragments.$inferSelect;
type OutputRow = typeof outputs.$inferSelect;
type ScanRow = Pick<typeof scans.$inferSelect, "id" | "originalName" | "dpiX" | "dpiY" | "dpiSource">;

const round = (v: number, d = 2) => Math.round(v * 10 ** d) / 10 ** d;

/**
 * The title a batch copy carries (and its print caption shows): the fragment's own, or its scan's
 * name and number. The preset preview uses the same, so its picture shows the file's words.
 */
export function outputTitle(title: string | null, scanName: string | undefined, position: number): string {
  return title ?? `${scanName ?? "scan"} #${position}`;
}

/** What a download of this output is called: the scan's name, the fragment's number, the kind. */
export function outputFileName(scanName: string, position: number, kind: string, format: string): string {
  const stem =
    scanName
      .replace(/\.[^.]+$/, "")
      .replace(/[^\w.-]+/g, "-")
      .slice(0, 80) || "scan";
  const ext = format === "jpeg" ? "jpg" : format === "tiff" ? "tif" : format;
  return `${stem}-${String(position).padStart(2, "0")}-${kind}.${ext}`;
}

export function presentFragment(row: FragmentRow, scan: ScanRow, outs: OutputRow[], mergedFrom: string[] = []): Fragment {
  const dpiX = scan.dpiX ?? 300;
  const dpiY = scan.dpiY ?? dpiX;
  // The upright width runs along the rect's width; at small angles x and y DPI map straight across.
  const wIn = row.rect.width / dpiX;
  const hIn = row.rect.height / dpiY;
  const proposal = row.proposal;
  const edited =
    proposal != null &&
    (proposal.angle !== row.angle || proposal.shape !== row.shape || JSON.stringify(proposal.rect) !== JSON.stringify(row.rect));
  return {
    id: row.id,
    scanId: row.scanId,
    scanName: scan.originalName,
    position: row.position,
    status: row.status,
    origin: row.origin,
    box: row.box,
    angle: row.angle,
    rect: row.rect,
    outline: row.outline,
    shape: row.shape,
    areaPx: row.areaPx,
    confidence: row.confidence,
    sizeIn: { width: round(wIn, 3), height: round(hIn, 3) },
    sizeMm: { width: round(wIn * MM_PER_INCH, 1), height: round(hIn * MM_PER_INCH, 1) },
    dpi: { x: dpiX, y: dpiY, source: scan.dpiSource ?? "assumed" },
    edited,
    resettable: proposal != null && (edited || row.status !== "proposed"),
    mergedFrom,
    title: row.title,
    tags: row.tags,
    notes: row.notes,
    recipeId: row.recipeId,
    revision: row.revision,
    renderState: row.renderState,
    renderError: row.renderError,
    outputs: outs
      .filter((o): o is OutputRow & { kind: "master" | "web" } => o.kind === "master" || o.kind === "web")
      .filter((o) => o.revision === row.revision || row.renderState !== "done")
      .map((o): Output => ({
        kind: o.kind,
        format: o.format,
        width: o.width,
        height: o.height,
        bitDepth: o.bitDepth,
        hasAlpha: o.hasAlpha,
        dpi: o.dpi,
        bytes: o.bytes,
        fileName: outputFileName(scan.originalName, row.position, o.kind, o.format),
        createdAt: o.createdAt.toISOString(),
        updatedAt: o.updatedAt.toISOString(),
      })),
    reviewedAt: row.reviewedAt?.toISOString() ?? null,
    updatedAt: row.updatedAt.toISOString(),
  };
}
