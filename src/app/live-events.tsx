import { createContext, useContext, useEffect, useState, type ReactNode } from "react";
import { useQueryClient } from "@tanstack/react-query";
import { API } from "../../shared/api";
import { liveEventSchema } from "../../shared/schemas/queue";
import { fragmentKeys } from "../features/fragments/api/keys";
import { queueKeys } from "../features/queue/api/get-queue";
import { batchKeys } from "../features/recipes/api/keys";
import { scanKeys } from "../features/scans/api/keys";
import { STUDIO_KEY } from "../features/studio/api/get-studio";
import { throttle } from "../lib/throttle";

export type LiveState = "connecting" | "live" | "offline";

const LiveContext = createContext<LiveState>("connecting");

/** At most four refreshes a second, however fast the events arrive. */
const REFRESH_EVERY_MS = 250;

/**
 * Keeps the queue, scans and fragments current: every `change` event from /api/events refreshes them.
 * EventSource reconnects by itself; while it is away the queue's 5 s poll carries on.
 */
export function LiveEventsProvider({ children }: { children: ReactNode }) {
  const queryClient = useQueryClient();
  const [state, setState] = useState<LiveState>("connecting");

  useEffect(() => {
    const refresh = throttle(() => {
      void queryClient.invalidateQueries({ queryKey: queueKeys.all });
      void queryClient.invalidateQueries({ queryKey: scanKeys.all });
      // Renders finishing, another reviewer's decisions, a new split.
      void queryClient.invalidateQueries({ queryKey: fragmentKeys.all });
      // Batch progress moves with every render that finishes.
      void queryClient.invalidateQueries({ queryKey: batchKeys.all });
    }, REFRESH_EVERY_MS);

    let source: EventSource | null = null;
    let retryTimer: ReturnType<typeof setTimeout> | undefined;
    let wasOffline = false;

    const connect = () => {
      source = new EventSource(API.events.path);
      source.onopen = () => {
        setState("live");
        // Anything may have changed while the stream was away.
        if (wasOffline) refresh();
        wasOffline = false;
      };
      source.onerror = () => {
        wasOffline = true;
        setState("offline");
        // The browser retries a dropped stream by itself, but gives up on an error status:
        // then start again a little later.
        if (source?.readyState === EventSource.CLOSED) {
          source.close();
          retryTimer = setTimeout(connect, 5000);
        }
      };
      source.addEventListener("change", (event) => {
        const parsed = liveEventSchema.safeParse(safeJson((event as MessageEvent<string>).data));
        if (!parsed.success) return;
        // The studio's name and rights (the rail, the Studio screen, preset previews) are read again.
        if (parsed.data.kind === "studio") void queryClient.invalidateQueries({ queryKey: STUDIO_KEY });
        else refresh();
      });
    };
    connect();

    return () => {
      refresh.cancel();
      clearTimeout(retryTimer);
      source?.close();
    };
  }, [queryClient]);

  return <LiveContext.Provider value={state}>{children}</LiveContext.Provider>;
}

function safeJson(text: string): unknown {
  try {
    return JSON.parse(text);
  } catch {
    return undefined;
  }
}

export function useLiveState(): LiveState {
  return useContext(LiveContext);
}

const LABELS: Record<LiveState, string> = {
  connecting: "Connecting",
  live: "Live",
  offline: "Offline",
};

const HINTS: Record<LiveState, string> = {
  connecting: "Opening the live connection to the server",
  live: "Changes appear as they happen",
  offline: "The live connection dropped; refreshing every 5 seconds until it is back",
};

/** A small "Live" / "Offline" marker for the page header. */
export function LiveIndicator() {
  const state = useLiveState();
  return (
    <span
      role="status"
      aria-label={`Live updates: ${LABELS[state]}`}
      title={HINTS[state]}
      className="inline-flex items-center gap-2 rounded-full border border-paper-300 bg-paper-50 px-3 py-1 text-xs font-medium text-ink-soft"
    >
      <span className="relative flex size-2" aria-hidden="true">
        <span
          className={
            state === "live"
              ? "relative inline-flex size-2 rounded-full bg-accent"
              : state === "offline"
                ? "relative inline-flex size-2 rounded-full border border-brick"
                : "relative inline-flex size-2 rounded-full bg-ink-faint"
          }
        />
      </span>
      {LABELS[state]}
    </span>
  );
}
