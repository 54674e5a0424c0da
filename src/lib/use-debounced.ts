import { useEffect, useState } from "react";

/**
 * `value`, once it has stayed the same for `delayMs`: a burst of changes (a slider dragged)
 * becomes one. The first value is there at once.
 */
export function useDebounced<T>(value: T, delayMs: number): T {
  const [settled, setSettled] = useState(value);
  useEffect(() => {
    const timer = setTimeout(() => setSettled(value), delayMs);
    return () => clearTimeout(timer);
  }, [value, delayMs]);
  return settled;
}
