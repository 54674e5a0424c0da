import { useState } from "react";
import { cn } from "../../../lib/cn";
import { scanThumbUrl } from "../api/get-scan";

/** The list thumbnail, or a quiet placeholder until the worker has made one. */
export function ScanThumb({
  id,
  hasPreview,
  className,
}: {
  id: string;
  hasPreview: boolean;
  className?: string;
}) {
  const [broken, setBroken] = useState(false);
  const box = cn(
    "flex size-12 shrink-0 items-center justify-center overflow-hidden rounded border border-paper-300 bg-paper-200",
    className,
  );
  if (!hasPreview || broken) {
    return (
      <span className={box} aria-hidden="true">
        <svg viewBox="0 0 24 24" className="size-5 text-ink-faint">
          <rect
            x="3"
            y="5"
            width="18"
            height="14"
            rx="2"
            fill="none"
            stroke="currentColor"
            strokeWidth="1.5"
          />
          <path d="m6 16 4-4 3 3 2-2 3 3" fill="none" stroke="currentColor" strokeWidth="1.5" />
        </svg>
      </span>
    );
  }
  return (
    <span className={box}>
      <img
        src={scanThumbUrl(id)}
        alt=""
        loading="lazy"
        decoding="async"
        onError={() => setBroken(true)}
        className="size-full object-contain"
      />
    </span>
  );
}
