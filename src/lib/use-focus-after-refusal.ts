import { useEffect, useState, type RefObject } from "react";

/**
 * After a form is refused (by its own check or by the server), puts the caret back where the
 * person has to type next: the first field marked invalid, or `fallback` when the refusal names
 * none (a wrong password). Its text is selected, so typing replaces it. It waits until the form is
 * enabled again (its fields are disabled while it is sent, which drops the focus to the page).
 * Returns the function to call on each refusal.
 */
export function useFocusAfterRefusal(
  form: RefObject<HTMLFormElement | null>,
  busy: boolean,
  fallback?: RefObject<HTMLInputElement | null>,
): () => void {
  const [refusals, setRefusals] = useState(0);
  useEffect(() => {
    if (refusals === 0 || busy) return;
    const target = form.current?.querySelector<HTMLInputElement>('[aria-invalid="true"]') ?? fallback?.current;
    if (!target || target.disabled) return;
    target.focus();
    target.select?.();
  }, [refusals, busy, form, fallback]);
  return () => setRefusals((n) => n + 1);
}
