import { useEffect } from "react";
import { useBlocker } from "react-router-dom";

/**
 * Holds back leaving the page while there are unsaved changes: another screen of the app asks
 * first (the blocker's state is "blocked" until proceed or reset), closing or reloading the tab
 * gets the browser's own question. Changes of the query string (which fragments are previewed)
 * are not leaving.
 */
export function useLeaveGuard(dirty: boolean) {
  const blocker = useBlocker(({ currentLocation, nextLocation }) => dirty && currentLocation.pathname !== nextLocation.pathname);
  useEffect(() => {
    if (!dirty) return;
    const warn = (event: BeforeUnloadEvent) => event.preventDefault();
    window.addEventListener("beforeunload", warn);
    return () => window.removeEventListener("beforeunload", warn);
  }, [dirty]);
  return blocker;
}
