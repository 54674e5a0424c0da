import type { Scan } from "../../shared/schemas/scans";
import { physicalSize } from "../../shared/units";
import type { scans } from "../db/schema";

type ScanRow = typeof scans.$inferSelect;

/** A scan as the API shows it: never the raw row (no library paths, no internal keys). */
export function presentScan(
  row: ScanRow,
  intake: { id: string; name: string },
  duplicateOf: Scan["duplicateOf"],
  fragmentCounts: { proposed: number; total: number } = { proposed: 0, total: 0 },
  inInbox: Scan["inInbox"] = null,
  continuedBy: Scan["continuedBy"] = null,
): Scan {
  const hasDpi = row.dpiX != null && row.dpiY != null && row.dpiSource != null;
  return {
    id: row.id,
    originalName: row.originalName,
    intake,
    source: row.source,
    status: row.status,
    stage: row.stage,
    progress: row.progress,
    error: row.error,
    duplicateOf,
    sha256: row.sha256,
    sizeBytes: row.sizeBytes,
    width: row.width,
    height: row.height,
    format: row.format,
    bitDepth: row.bitDepth,
    channels: row.channels,
    colourSpace: row.colourSpace,
    hasIccProfile: row.hasIccProfile,
    iccDescription: row.iccDescription,
    hasAlpha: row.hasAlpha,
    dpi: hasDpi
      ? {
          x: row.dpiX!,
          y: row.dpiY!,
          source: row.dpiSource!,
          origin: (row.resolutionOrigin as NonNullable<Scan["dpi"]>["origin"]) ?? null,
        }
      : null,
    fileDpi: hasDpi
      ? {
          x: row.fileDpiX,
          y: row.fileDpiY,
          origin: row.fileDpiX != null ? ((row.fileResolutionOrigin as NonNullable<Scan["dpi"]>["origin"]) ?? null) : null,
        }
      : null,
    physical: hasDpi && row.width != null && row.height != null ? physicalSize(row.width, row.height, row.dpiX!, row.dpiY!) : null,
    attempts: row.attempts,
    errorCode: row.status === "failed" ? (row.errorCode ?? null) : null,
    fragments: fragmentCounts,
    splitSensitivity: row.splitSensitivity,
    hasPreview: row.previewKey != null,
    inInbox,
    continuedBy,
    createdAt: row.createdAt.toISOString(),
    updatedAt: row.updatedAt.toISOString(),
    analysedAt: row.analysedAt?.toISOString() ?? null,
  };
}
