import { useEffect, useState } from "react";

/**
 * The token a link from a message carries after `#token=`. Read once, then taken out of the
 * address bar, so it is not left in the browser's history or shown over a shoulder.
 */
export function useLinkToken(): string {
  const [token] = useState(() => new URLSearchParams(window.location.hash.slice(1)).get("token") ?? "");
  useEffect(() => {
    if (window.location.hash) {
      window.history.replaceState(window.history.state, "", window.location.pathname + window.location.search);
    }
  }, []);
  return token;
}
