import { useEffect, useState, type ReactNode } from "react";

/**
 * Waits before each new try of a picture that failed to load. A picture made on first view can be
 * refused for a moment while the server makes many (it answers "try again in a moment"), so it is
 * asked for again a few times; a picture that is truly gone costs only these few requests.
 */
export const THUMB_RETRY_AFTER_MS = [3_000, 8_000, 20_000];

/** The same address asked again: a new query word, so no failed answer is reused. */
const again = (src: string, n: number) => (n === 0 ? src : `${src}${src.includes("?") ? "&" : "?"}again=${n}`);

/**
 * A lazily loaded thumbnail, or `fallback` while that address fails to load. A failed picture is
 * tried again after `THUMB_RETRY_AFTER_MS`, showing the fallback meanwhile; a new address (a new
 * revision of the fragment) starts afresh.
 */
export function ThumbImage({ src, className, fallback }: { src: string; className: string; fallback: ReactNode }) {
  // The address's failed tries so far, and whether the next is being waited for.
  const [state, setState] = useState<{ src: string; failures: number; waiting: boolean }>({ src, failures: 0, waiting: false });
  const current = state.src === src ? state : { src, failures: 0, waiting: false };
  const waitMs = current.waiting ? THUMB_RETRY_AFTER_MS[current.failures - 1] : undefined;

  useEffect(() => {
    if (waitMs === undefined) return;
    const timer = setTimeout(() => setState((s) => (s.src === src ? { ...s, waiting: false } : s)), waitMs);
    return () => clearTimeout(timer);
  }, [src, waitMs, current.failures]);

  if (current.waiting || current.failures > THUMB_RETRY_AFTER_MS.length) return fallback;
  return (
    <img
      key={current.failures}
      src={again(src, current.failures)}
      alt=""
      loading="lazy"
      decoding="async"
      onError={() =>
        setState({
          src,
          failures: current.failures + 1,
          waiting: current.failures < THUMB_RETRY_AFTER_MS.length,
        })
      }
      className={className}
    />
  );
}
