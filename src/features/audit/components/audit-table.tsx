import { useEffect, useEffectEvent, useRef } from "react";
import { Link } from "react-router-dom";
import type { AuditEvent } from "../../../../shared/schemas/audit";
import { Ago } from "../../../components/ago";
import { cn } from "../../../lib/cn";
import { formatShortDateTime } from "../../../lib/time";
import { SUBJECT_LABELS, actionLabel, actorLabel, subjectPath } from "../format";
import { isTyping } from "../../../lib/typing";

/** A tone per kind of action, so refusals and removals stand out in a long list. */
function actionTone(action: string): string {
  if (
    action === "auth.sign_in_failed" ||
    action.endsWith(".reject") ||
    action.endsWith(".disable") ||
    action.endsWith(".cancel") ||
    action.endsWith(".unmerge")
  ) {
    return "bg-brick";
  }
  if (action.startsWith("auth.")) return "bg-ink-faint";
  if (action.endsWith(".approve") || action.endsWith(".approve_remaining") || action.endsWith(".enable")) return "bg-accent";
  return "bg-ochre";
}

/**
 * The trail, newest first. One row is open beside the list; j/k or the arrows move it, `/` goes to
 * the search, Esc closes the open event, Enter follows the link to what the event is about.
 */
export function AuditTable({
  events,
  selectedId,
  onSelect,
  onOpenSubject,
  busy,
}: {
  events: AuditEvent[];
  selectedId?: number;
  onSelect: (id: number | undefined) => void;
  onOpenSubject: (event: AuditEvent) => void;
  busy?: boolean;
}) {
  const rows = useRef(new Map<number, HTMLTableRowElement>());
  const index = events.findIndex((e) => e.id === selectedId);

  const move = (delta: number) => {
    if (!events.length) return;
    const next = index < 0 ? (delta > 0 ? 0 : events.length - 1) : Math.min(events.length - 1, Math.max(0, index + delta));
    const id = events[next]!.id;
    onSelect(id);
    const row = rows.current.get(id);
    row?.focus();
    row?.scrollIntoView({ block: "nearest" });
  };

  // One listener for the page's life; it always sees this render's list and selection
  // (a listener re-added after each render could miss a key pressed just after a change).
  const onKey = useEffectEvent((event: KeyboardEvent) => {
    if (event.metaKey || event.ctrlKey || event.altKey) return;
    if (event.key === "Escape" && selectedId !== undefined) {
      onSelect(undefined);
      return;
    }
    if (isTyping(event.target)) return;
    const inTable = event.target instanceof HTMLElement && event.target.closest("[data-audit-table]");
    if (event.key === "j" || (inTable && event.key === "ArrowDown")) {
      event.preventDefault();
      move(1);
    } else if (event.key === "k" || (inTable && event.key === "ArrowUp")) {
      event.preventDefault();
      move(-1);
    } else if (event.key === "/") {
      event.preventDefault();
      document.querySelector<HTMLInputElement>("[data-audit-search]")?.focus();
    } else if (event.key === "Enter" && inTable && index >= 0) {
      event.preventDefault();
      onOpenSubject(events[index]!);
    }
  });
  useEffect(() => {
    const listener = (event: KeyboardEvent) => onKey(event);
    document.addEventListener("keydown", listener);
    return () => document.removeEventListener("keydown", listener);
  }, []);

  return (
    <table
      data-audit-table
      className={cn("w-full table-fixed border-collapse text-sm", busy && "opacity-70")}
      aria-busy={busy || undefined}
    >
      <caption className="sr-only">
        Audit trail, newest first. Use j and k or the arrow keys to move between events, Enter to open what one is about.
      </caption>
      <colgroup>
        <col className="w-[8.5rem]" />
        <col className="w-[10rem]" />
        <col />
        <col className="w-[6.5rem]" />
      </colgroup>
      <thead>
        <tr className="border-b border-paper-300 text-left text-xs font-semibold tracking-wide text-ink-muted">
          <th scope="col" className="py-2.5 pr-3 pl-5">
            When
          </th>
          <th scope="col" className="px-3 py-2.5">
            Who
          </th>
          <th scope="col" className="px-3 py-2.5">
            What
          </th>
          <th scope="col" className="py-2.5 pr-5 pl-3">
            About
          </th>
        </tr>
      </thead>
      <tbody>
        {events.map((event, i) => {
          const selected = event.id === selectedId;
          const to = subjectPath(event);
          const unknownActor = !event.actor.id && event.actor.email;
          return (
            <tr
              key={event.id}
              ref={(el) => {
                if (el) rows.current.set(event.id, el);
                else rows.current.delete(event.id);
              }}
              tabIndex={selected || (index < 0 && i === 0) ? 0 : -1}
              aria-selected={selected}
              data-active={selected || undefined}
              onFocus={() => !selected && onSelect(event.id)}
              onClick={(e) => {
                if ((e.target as HTMLElement).closest("a,button")) return;
                onSelect(event.id);
              }}
              className="cursor-pointer border-b border-paper-200 align-top outline-none hover:bg-white/70 focus-visible:shadow-[inset_3px_0_0_#2f6b5e] data-active:bg-accent-faint"
            >
              <td className="py-2.5 pr-3 pl-5 text-xs whitespace-nowrap">
                <span className="figure block text-ink-soft">{formatShortDateTime(event.at)}</span>
                <Ago iso={event.at} className="block text-ink-muted" />
              </td>
              <td className="px-3 py-2.5">
                <span className="block truncate font-medium text-ink" title={event.actor.email ?? undefined}>
                  {actorLabel(event)}
                </span>
                {unknownActor ? (
                  <span className="block text-xs text-brick">unknown address</span>
                ) : event.actor.name && event.actor.email ? (
                  <span className="block truncate text-xs text-ink-muted">{event.actor.email}</span>
                ) : !event.actor.email ? (
                  <span className="block text-xs text-ink-muted">on its own</span>
                ) : null}
              </td>
              <td className="px-3 py-2.5">
                <span className="flex items-center gap-2 text-xs font-semibold tracking-wide text-ink-soft">
                  <span aria-hidden="true" className={cn("size-2 shrink-0 rounded-full", actionTone(event.action))} />
                  {actionLabel(event.action)}
                </span>
                <span className="mt-0.5 block text-ink">{event.summary}</span>
              </td>
              <td className="py-2.5 pr-5 pl-3 text-xs">
                {to ? (
                  <Link to={to} tabIndex={-1} className="font-medium text-accent hover:underline">
                    {SUBJECT_LABELS[event.subjectType] ?? event.subjectType}
                  </Link>
                ) : (
                  <span className="text-ink-muted">{SUBJECT_LABELS[event.subjectType] ?? event.subjectType}</span>
                )}
              </td>
            </tr>
          );
        })}
      </tbody>
    </table>
  );
}
