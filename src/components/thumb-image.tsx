import { useState, type ReactNode } from "react";

/**
 * A lazily loaded thumbnail, or `fallback` once that address fails to load. A new address (a new
 * revision of the fragment) is tried again.
 */
export function ThumbImage({
  src,
  className,
  fallback,
}: {
  src: string;
  className: string;
  fallback: ReactNode;
}) {
  const [broken, setBroken] = useState<string | null>(null);
  if (broken === src) return fallback;
  return (
    <img
      src={src}
      alt=""
      loading="lazy"
      decoding="async"
      onError={() => setBroken(src)}
      className={className}
    />
  );
}
