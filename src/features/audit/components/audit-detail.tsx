import type { ReactNode } from "react";
import { Link } from "react-router-dom";
import type { AuditChange, AuditEvent } from "../../../../shared/schemas/audit";
import { Ago } from "../../../components/ago";
import { Spinner } from "../../../components/button";
import { LoadError } from "../../../components/notice";
import { formatDateTimeLong } from "../../../lib/time";
import { cn } from "../../../lib/cn";
import { useAuditEvent } from "../api/get-audit-event";
import { SUBJECT_LABELS, actionLabel, actorLabel, fieldLabel, subjectPath, valueView } from "../format";

function Value({ value, side }: { value: unknown; side: "before" | "after" }) {
  const view = valueView(value);
  switch (view.kind) {
    case "empty":
      return <span className="text-ink-muted">—</span>;
    case "text":
      return <span className={cn("break-words", side === "after" ? "text-ink" : "text-ink-soft")}>{view.text}</span>;
    case "list":
      return (
        <span className="flex flex-wrap gap-1">
          {view.items.map((item, i) => (
            <span key={`${item}-${i}`} className="figure rounded bg-paper-200 px-1.5 py-0.5 text-[11px] text-ink-soft">
              {item}
            </span>
          ))}
        </span>
      );
    case "pairs":
      return (
        <dl className="grid grid-cols-[auto_1fr] gap-x-2 text-xs">
          {view.pairs.map(([k, v]) => (
            <div key={k} className="contents">
              <dt className="text-ink-muted">{k}</dt>
              <dd className={cn("figure min-w-0 break-words", side === "after" ? "text-ink" : "text-ink-soft")}>{v}</dd>
            </div>
          ))}
        </dl>
      );
    case "json":
      return (
        <pre className="figure max-h-48 overflow-auto rounded bg-paper-100 px-2 py-1.5 text-[11px] leading-4 whitespace-pre-wrap text-ink-soft">
          {view.text}
        </pre>
      );
  }
}

/** Each changed field in a row: what it was, what it became. */
export function ChangesTable({ changes, hasBefore, hasAfter }: { changes: AuditChange[]; hasBefore: boolean; hasAfter: boolean }) {
  return (
    <table className="w-full table-fixed border-collapse text-sm">
      <caption className="sr-only">Changed fields, before and after</caption>
      <colgroup>
        <col className="w-[7.5rem]" />
        <col />
        <col />
      </colgroup>
      <thead>
        <tr className="border-b border-paper-300 text-left text-xs font-semibold tracking-wide text-ink-muted">
          <th scope="col" className="py-2 pr-3">
            Field
          </th>
          <th scope="col" className="px-3 py-2">
            {hasBefore ? "Before" : "Before (none)"}
          </th>
          <th scope="col" className="py-2 pl-3">
            {hasAfter ? "After" : "After (none)"}
          </th>
        </tr>
      </thead>
      <tbody>
        {changes.map((c) => (
          <tr key={c.field} className="border-b border-paper-200 align-top last:border-b-0">
            <th scope="row" className="py-2 pr-3 text-left text-xs font-medium text-ink-soft">
              {fieldLabel(c.field)}
            </th>
            <td className="bg-brick-soft/40 px-3 py-2">
              <Value value={c.before} side="before" />
            </td>
            <td className="bg-accent-faint px-3 py-2 pl-3">
              <Value value={c.after} side="after" />
            </td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

function Row({ label, children }: { label: string; children: ReactNode }) {
  return (
    <div className="grid grid-cols-[5.5rem_1fr] gap-3 py-1">
      <dt className="text-xs font-medium text-ink-muted">{label}</dt>
      <dd className="min-w-0 text-sm text-ink">{children}</dd>
    </div>
  );
}

/** One event in full: who, when, from where, what it is about, and its fields side by side. */
export function AuditDetail({ id, preview }: { id: number; preview?: AuditEvent }) {
  const detail = useAuditEvent(id);
  const event = detail.data ?? preview;
  if (!event) {
    return detail.isError ? (
      <LoadError error={detail.error} onRetry={() => void detail.refetch()} />
    ) : (
      <p className="flex items-center gap-2 text-sm text-ink-muted">
        <Spinner /> Loading the event…
      </p>
    );
  }
  const to = subjectPath(event);
  const changes = detail.data?.changes;
  return (
    <article aria-labelledby="audit-event-title" className="flex flex-col gap-4">
      <header>
        <p className="text-xs font-semibold tracking-wide text-ink-muted uppercase">{actionLabel(event.action)}</p>
        <h3 id="audit-event-title" className="mt-1 text-base leading-snug font-semibold text-ink">
          {event.summary}
        </h3>
      </header>
      <dl>
        <Row label="When">
          <span className="figure">{formatDateTimeLong(event.at)}</span>{" "}
          <span className="text-ink-muted">
            (<Ago iso={event.at} />)
          </span>
        </Row>
        <Row label="Who">
          {actorLabel(event)}
          {event.actor.name && event.actor.email && <span className="block text-xs text-ink-muted">{event.actor.email}</span>}
          {!event.actor.id && event.actor.email && <span className="block text-xs text-brick">No account has this address</span>}
        </Row>
        <Row label="About">
          {SUBJECT_LABELS[event.subjectType] ?? event.subjectType}
          {to && (
            <>
              {" · "}
              <Link to={to} className="font-medium text-accent hover:underline">
                Open
              </Link>
            </>
          )}
          {event.subjectId && <span className="figure block truncate text-[11px] text-ink-muted">{event.subjectId}</span>}
        </Row>
        {(event.ip || event.userAgent) && (
          <Row label="From">
            {event.ip && <span className="figure">{event.ip}</span>}
            {event.userAgent && (
              <span className="block truncate text-xs text-ink-muted" title={event.userAgent}>
                {event.userAgent}
              </span>
            )}
          </Row>
        )}
        <Row label="Event">
          <span className="figure text-ink-soft">#{event.id}</span>
        </Row>
      </dl>
      <section aria-label="Changes">
        <h4 className="mb-1 text-xs font-semibold tracking-wide text-ink-muted uppercase">Changes</h4>
        {!changes ? (
          <p className="flex items-center gap-2 text-sm text-ink-muted">
            <Spinner /> Loading…
          </p>
        ) : changes.length === 0 ? (
          <p className="text-sm text-ink-muted">No fields changed: this event records an action, not an edit.</p>
        ) : (
          <ChangesTable changes={changes} hasBefore={event.before !== null} hasAfter={event.after !== null} />
        )}
      </section>
    </article>
  );
}
