import { useState } from "react";
import type { Scan } from "../../../../shared/schemas/scans";
import { scanPreviewUrl } from "../api/get-scan";

/** The scan at browser size on a neutral mat, or a note saying why there is no picture yet. */
export function ScanPreview({ scan }: { scan: Scan }) {
  const [broken, setBroken] = useState(false);
  const note =
    scan.status === "failed"
      ? "No preview: analysis stopped before one was made."
      : scan.status === "duplicate"
        ? "No preview for a duplicate: open the first copy to see it."
        : "The preview appears here as soon as the worker has made it.";
  return (
    <figure className="flex min-h-[28rem] items-center justify-center rounded-xl border border-paper-300 bg-[#e7e2d6] p-6 shadow-inner">
      {scan.hasPreview && !broken ? (
        <img
          src={scanPreviewUrl(scan.id)}
          alt={`Preview of ${scan.originalName}`}
          onError={() => setBroken(true)}
          className="max-h-[70vh] w-auto max-w-full bg-white object-contain shadow-md"
        />
      ) : (
        <figcaption className="max-w-xs text-center text-sm text-ink-muted">{note}</figcaption>
      )}
    </figure>
  );
}
