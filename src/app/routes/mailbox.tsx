import { useState } from "react";
import { NotAllowed } from "../../components/not-allowed";
import { Spinner } from "../../components/button";
import { LoadError, Notice } from "../../components/notice";
import { PageHeader, Panel } from "../../components/panel";
import { useMailbox, useMailboxMessage } from "../../features/mailbox/api/mailbox";
import { MailboxList } from "../../features/mailbox/components/mailbox-list";
import { MessageView } from "../../features/mailbox/components/message-view";
import { useHasRole, useSessionUser } from "../../lib/authorization";

export function MailboxRoute() {
  const me = useSessionUser();
  if (!useHasRole("admin")) return <NotAllowed needed="admin" current={me.role} />;
  return <MailboxPage />;
}

/** The development mailbox: every message the local mail fake received, as sent. */
function MailboxPage() {
  const mailbox = useMailbox(true, 3000);
  const [picked, setPicked] = useState<string | null>(null);
  const list = mailbox.data ?? [];
  const selected = picked ?? list[0]?.id ?? null;
  const message = useMailboxMessage(selected);

  return (
    <>
      <title>Mailbox · Platen</title>
      <PageHeader
        title="Mailbox"
        description="Mail stays on this machine in development: every message Platen sent, kept by the local mail fake."
      />
      {mailbox.isPending ? (
        <p className="flex items-center gap-2 text-sm text-ink-muted">
          <Spinner /> Loading the mailbox…
        </p>
      ) : mailbox.isError ? (
        <LoadError error={mailbox.error} onRetry={() => void mailbox.refetch()} />
      ) : mailbox.data === null ? (
        <Notice title="No development mailbox here">
          This server sends mail to a real mail server, so there is nothing to show on this screen.
        </Notice>
      ) : (
        <div className="grid grid-cols-1 items-start gap-6 lg:grid-cols-[minmax(18rem,1fr)_minmax(0,2fr)]">
          <Panel title={`Received (${list.length})`} titleId="received-title" bodyClassName="p-0">
            <MailboxList messages={list} selected={selected} onSelect={setPicked} />
          </Panel>
          <Panel bodyClassName="p-0" className="overflow-hidden">
            {!selected ? (
              <p className="px-5 py-4 text-sm text-ink-muted">Pick a message to read it.</p>
            ) : message.isPending ? (
              <p className="flex items-center gap-2 px-5 py-4 text-sm text-ink-muted">
                <Spinner /> Opening…
              </p>
            ) : message.isError ? (
              <div className="p-5">
                <LoadError error={message.error} />
              </div>
            ) : (
              <MessageView key={message.data.id} message={message.data} />
            )}
          </Panel>
        </div>
      )}
    </>
  );
}
