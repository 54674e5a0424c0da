import { useSyncExternalStore } from "react";

/**
 * Whether a CSS media query matches now, kept current as the window changes. For a layout that
 * must put one thing in another place (not merely restyle it), so it is rendered once.
 * Example: `useMediaQuery("(min-width: 80rem)")` is true from Tailwind's `xl` width up.
 */
export function useMediaQuery(query: string): boolean {
  return useSyncExternalStore(
    (onChange) => {
      const list = window.matchMedia(query);
      list.addEventListener("change", onChange);
      return () => list.removeEventListener("change", onChange);
    },
    () => window.matchMedia(query).matches,
  );
}
