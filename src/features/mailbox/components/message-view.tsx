import { useState, type ReactNode } from "react";
import type { MailboxMessage } from "../../../../shared/schemas/mail";
import { cn } from "../../../lib/cn";
import { formatDateTimeLong } from "../../../lib/time";

const URL_RE = /(https?:\/\/[^\s<>"]+)/g;

/** Plain text with its web addresses made into links (opening in this tab, like the HTML part). */
function linkified(text: string): ReactNode[] {
  return text.split(URL_RE).map((part, i) =>
    i % 2 === 1 ? (
      <a key={i} href={part} className="break-all text-accent underline">
        {part}
      </a>
    ) : (
      part
    ),
  );
}

/**
 * One received message: its HTML part in a sandboxed frame (no scripts; links open in this tab)
 * and its plain-text part, as a mail program would show them.
 */
export function MessageView({ message }: { message: MailboxMessage }) {
  const [part, setPart] = useState<"html" | "text">(message.html ? "html" : "text");
  const srcDoc = message.html ? message.html.replace(/<head>/i, '<head><base target="_top">') : "";
  return (
    <article aria-label={`Message: ${message.subject}`} className="flex h-full flex-col">
      <header className="border-b border-paper-200 px-5 py-4">
        <h2 className="text-base font-semibold text-ink">{message.subject || "(no subject)"}</h2>
        <dl className="mt-2 grid grid-cols-[auto_1fr] gap-x-3 gap-y-0.5 text-xs text-ink-muted">
          <dt>From</dt>
          <dd className="text-ink-soft">{message.from}</dd>
          <dt>To</dt>
          <dd className="text-ink-soft">{message.to.join(", ")}</dd>
          <dt>Received</dt>
          <dd className="text-ink-soft">{formatDateTimeLong(message.receivedAt)}</dd>
        </dl>
        <div role="tablist" aria-label="Part" className="mt-3 inline-flex rounded-md border border-paper-300 bg-paper-100 p-0.5 text-xs">
          {(["html", "text"] as const).map((p) => (
            <button
              key={p}
              role="tab"
              type="button"
              aria-selected={part === p}
              disabled={p === "html" && !message.html}
              onClick={() => setPart(p)}
              className={cn(
                "rounded px-2.5 py-1 font-medium",
                part === p ? "bg-white text-ink shadow-sheet" : "text-ink-muted hover:text-ink",
              )}
            >
              {p === "html" ? "HTML" : "Plain text"}
            </button>
          ))}
        </div>
      </header>
      {part === "html" && message.html ? (
        <iframe
          title="HTML part"
          srcDoc={srcDoc}
          sandbox="allow-top-navigation-by-user-activation allow-popups"
          className="min-h-[720px] w-full flex-1 bg-white"
        />
      ) : (
        <pre className="flex-1 overflow-auto px-5 py-4 font-mono text-xs leading-relaxed whitespace-pre-wrap text-ink">
          {linkified(message.text)}
        </pre>
      )}
    </article>
  );
}
