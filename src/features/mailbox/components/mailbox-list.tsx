import type { MailboxSummary } from "../../../../shared/schemas/mail";
import { Ago } from "../../../components/ago";
import { EmptyNote } from "../../../components/panel";
import { cn } from "../../../lib/cn";

/** Received messages, newest first: to whom, what about, when. */
export function MailboxList({
  messages,
  selected,
  onSelect,
}: {
  messages: MailboxSummary[];
  selected: string | null;
  onSelect: (id: string) => void;
}) {
  if (!messages.length) {
    return (
      <div className="px-5 py-4">
        <EmptyNote>No mail yet. Invitations, password resets and notices land here.</EmptyNote>
      </div>
    );
  }
  return (
    <ul aria-label="Messages" className="divide-y divide-paper-200">
      {messages.map((m) => (
        <li key={m.id}>
          <button
            type="button"
            onClick={() => onSelect(m.id)}
            aria-current={selected === m.id || undefined}
            className={cn(
              "block w-full px-5 py-3 text-left hover:bg-paper-100",
              selected === m.id && "bg-accent-faint hover:bg-accent-faint",
            )}
          >
            <span className="flex items-baseline justify-between gap-3">
              <span className="truncate text-sm font-medium text-ink">{m.to.join(", ")}</span>
              <Ago iso={m.receivedAt} className="shrink-0 text-xs text-ink-muted" />
            </span>
            <span className="mt-0.5 block truncate text-sm text-ink-soft">{m.subject}</span>
          </button>
        </li>
      ))}
    </ul>
  );
}
