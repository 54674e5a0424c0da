import { useEffect, useState } from "react";

/**
 * The text of a search box whose search lives in the address (`current`): what is typed is sent
 * on (`onSearch`, trimmed, undefined when empty) once typing pauses for `delayMs`, and a change of
 * the address (the back button, a "Clear") shows in the box without fighting the person typing.
 * Returns the box's text and its setter.
 */
export function useSearchText(
  current: string | undefined,
  onSearch: (q: string | undefined) => void,
  delayMs = 250,
): [string, (text: string) => void] {
  const [text, setText] = useState(current ?? "");
  const [seen, setSeen] = useState(current);
  if (seen !== current) {
    setSeen(current);
    if (text.trim() !== (current ?? "")) setText(current ?? "");
  }
  useEffect(() => {
    const trimmed = text.trim();
    if (trimmed === (current ?? "")) return;
    const timer = setTimeout(() => onSearch(trimmed || undefined), delayMs);
    return () => clearTimeout(timer);
  }, [text, current, onSearch, delayMs]);
  return [text, setText];
}
