import { Kbd } from "../../../components/kbd";

export const REVIEW_KEYS: Array<{ keys: string[]; what: string; editing?: boolean }> = [
  { keys: ["J", "K"], what: "next / previous" },
  { keys: ["A"], what: "approve, go on", editing: true },
  { keys: ["X"], what: "reject, go on", editing: true },
  { keys: ["U"], what: "undo (or Ctrl+Z)", editing: true },
  { keys: ["Shift", "A"], what: "approve all remaining", editing: true },
  { keys: ["Shift", "J"], what: "add to selection" },
  { keys: ["M"], what: "merge selected", editing: true },
  { keys: ["[", "]"], what: "turn ½°", editing: true },
  { keys: ["R"], what: "reset", editing: true },
  { keys: ["D"], what: "draw a missed piece", editing: true },
  { keys: ["E"], what: "move a side (arrows)", editing: true },
  { keys: ["T"], what: "title", editing: true },
  { keys: ["Z"], what: "zoom to selected" },
  { keys: ["Esc"], what: "clear selection" },
];

/** The review keys, always on screen, with the last thing done (also read out). */
export function KeyLegend({
  announcement,
  hasNextScan = false,
}: {
  announcement: string;
  /** Another scan waits for review: N opens it. */
  hasNextScan?: boolean;
}) {
  const keys = hasNextScan ? [...REVIEW_KEYS, { keys: ["N"], what: "next scan" }] : REVIEW_KEYS;
  return (
    <div className="flex shrink-0 flex-wrap items-center gap-x-4 gap-y-1.5 rounded-lg border border-paper-300 bg-paper-50 px-4 py-2 text-xs text-ink-soft">
      <h2 className="sr-only">Keys</h2>
      <ul className="flex flex-wrap items-center gap-x-4 gap-y-1.5" aria-label="Keys">
        {keys.map((k) => (
          <li key={k.what} className="flex items-center gap-1">
            {k.keys.map((key, i) => (
              <span key={key} className="flex items-center gap-0.5">
                {i > 0 && k.keys[0] === "Shift" && <span aria-hidden="true">+</span>}
                <Kbd>{key}</Kbd>
              </span>
            ))}
            <span className="ml-0.5">{k.what}</span>
          </li>
        ))}
      </ul>
      <p role="status" aria-live="polite" className="ml-auto min-w-0 truncate font-medium text-ink" data-testid="review-status">
        {announcement}
      </p>
    </div>
  );
}
