import { useState } from "react";
import { Link } from "react-router-dom";
import type { Scan } from "../../../../shared/schemas/scans";
import { paths } from "../../../config/paths";
import { useHasRole } from "../../../lib/authorization";
import { cn } from "../../../lib/cn";
import { scanPreviewUrl } from "../api/get-scan";
import { approvedCount } from "../format";
import { PiecesIcon } from "./scan-thumb";

const MAT = "flex items-center justify-center rounded-xl border border-paper-300 bg-[#e7e2d6] p-6 shadow-inner";

/** The scan at browser size on a neutral mat, or a note saying why there is no picture yet. */
export function ScanPreview({ scan }: { scan: Scan }) {
  const seesScans = useHasRole("operator");
  const [broken, setBroken] = useState(false);
  if (!seesScans) return <ApprovedWorkPointer scan={scan} />;
  const note =
    scan.status === "failed"
      ? "No preview: analysis stopped before one was made."
      : scan.status === "duplicate"
        ? "No preview for a duplicate: open the first copy to see it."
        : "The preview appears here as soon as the worker has made it.";
  return (
    <figure className={cn(MAT, "min-h-[28rem]")}>
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

/**
 * What a viewer sees in the picture's place: the whole scan shows every piece on the bed, reviewed
 * or not, so it stays with operators; the approved pieces are one link away.
 */
function ApprovedWorkPointer({ scan }: { scan: Scan }) {
  const approved = approvedCount(scan);
  const link =
    "inline-flex h-10 items-center rounded-md border border-paper-300 bg-paper-50 px-4 text-sm font-medium text-ink hover:bg-white";
  return (
    <figure className={cn(MAT, "min-h-[18rem]")} aria-label="The scan's picture">
      <figcaption className="flex max-w-sm flex-col items-center gap-3 text-center text-sm text-ink-muted">
        <span
          className="flex size-14 items-center justify-center rounded-lg border border-paper-300 bg-paper-100 text-ink-faint"
          aria-hidden="true"
        >
          <PiecesIcon className="size-7" />
        </span>
        <span>The picture of the whole scan is for operators: it shows every piece on the bed, including those not reviewed yet.</span>
        {approved > 0 ? (
          <Link to={`${paths.work}?scan=${encodeURIComponent(scan.id)}`} className={link}>
            See its {approved} approved {approved === 1 ? "fragment" : "fragments"}
          </Link>
        ) : (
          <>
            <span>Nothing from this scan is approved yet.</span>
            <Link to={paths.work} className={link}>
              Browse the approved work
            </Link>
          </>
        )}
      </figcaption>
    </figure>
  );
}
