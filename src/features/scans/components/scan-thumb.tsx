import { useState } from "react";
import { Link } from "react-router-dom";
import type { Scan } from "../../../../shared/schemas/scans";
import { paths } from "../../../config/paths";
import { useHasRole } from "../../../lib/authorization";
import { cn } from "../../../lib/cn";
import { scanThumbUrl } from "../api/get-scan";
import { approvedCount } from "../format";

const BOX = "flex size-12 shrink-0 items-center justify-center overflow-hidden rounded border border-paper-300 bg-paper-200";

/**
 * The list thumbnail, or a quiet placeholder until the worker has made one. A viewer never gets
 * the whole scan (it shows pieces nobody has approved): a neutral tile instead, which leads to
 * the scan's approved fragments when it has some.
 */
export function ScanThumb({
  scan,
  className,
}: {
  scan: Pick<Scan, "id" | "originalName" | "hasPreview" | "fragments">;
  className?: string;
}) {
  const seesScans = useHasRole("operator");
  const [broken, setBroken] = useState(false);
  const box = cn(BOX, className);
  if (!seesScans) {
    const approved = approvedCount(scan);
    if (approved === 0) {
      return (
        <span className={cn(box, "text-ink-faint")} aria-hidden="true">
          <PiecesIcon />
        </span>
      );
    }
    return (
      <Link
        to={`${paths.work}?scan=${encodeURIComponent(scan.id)}`}
        tabIndex={-1}
        className={cn(box, "text-ink-muted hover:border-accent hover:text-accent")}
        aria-label={`Approved work from ${scan.originalName} (${approved})`}
        title={`${approved} approved ${approved === 1 ? "fragment" : "fragments"}`}
      >
        <PiecesIcon />
      </Link>
    );
  }
  if (!scan.hasPreview || broken) {
    return (
      <span className={box} aria-hidden="true">
        <svg viewBox="0 0 24 24" className="size-5 text-ink-faint">
          <rect x="3" y="5" width="18" height="14" rx="2" fill="none" stroke="currentColor" strokeWidth="1.5" />
          <path d="m6 16 4-4 3 3 2-2 3 3" fill="none" stroke="currentColor" strokeWidth="1.5" />
        </svg>
      </span>
    );
  }
  return (
    <span className={box}>
      <img
        src={scanThumbUrl(scan.id)}
        alt=""
        loading="lazy"
        decoding="async"
        onError={() => setBroken(true)}
        className="size-full object-contain"
      />
    </span>
  );
}

/** Loose pieces on the bed: the tile a viewer sees where an operator sees the scan. */
export function PiecesIcon({ className }: { className?: string }) {
  return (
    <svg viewBox="0 0 24 24" className={cn("size-5", className)} aria-hidden="true">
      <g fill="none" stroke="currentColor" strokeWidth="1.5" strokeLinejoin="round">
        <rect x="3.5" y="4.5" width="7" height="8" rx="1" transform="rotate(-6 7 8.5)" />
        <rect x="13" y="3.5" width="7.5" height="6" rx="1" />
        <rect x="12" y="12.5" width="8" height="7.5" rx="1" transform="rotate(5 16 16)" />
        <rect x="4" y="15" width="5.5" height="5" rx="1" />
      </g>
    </svg>
  );
}
