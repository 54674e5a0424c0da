import { useState } from "react";
import { ROLE_LABELS } from "../../../../shared/roles";
import type { Invitation } from "../../../../shared/schemas/mail";
import { Ago } from "../../../components/ago";
import { Button, Spinner } from "../../../components/button";
import { ConfirmDialog } from "../../../components/confirm-dialog";
import { LoadError } from "../../../components/notice";
import { EmptyNote } from "../../../components/panel";
import { toast } from "../../../lib/toast";
import { useInvitations, useResendInvitation, useRevokeInvitation } from "../api/invitations";

/** Invitations not yet accepted: when they went out, until when they work, resend or revoke. */
export function InvitationsList() {
  const invitations = useInvitations();
  const resend = useResendInvitation();
  const revoke = useRevokeInvitation();
  const [revoking, setRevoking] = useState<Invitation | null>(null);

  if (invitations.isPending) {
    return (
      <p className="flex items-center gap-2 px-5 py-4 text-sm text-ink-muted">
        <Spinner /> Loading invitations…
      </p>
    );
  }
  if (invitations.isError) {
    return (
      <div className="p-5">
        <LoadError error={invitations.error} onRetry={() => void invitations.refetch()} />
      </div>
    );
  }
  if (!invitations.data.length) {
    return (
      <div className="px-5 py-3">
        <EmptyNote>No invitation is waiting for an answer.</EmptyNote>
      </div>
    );
  }

  const doResend = (i: Invitation) =>
    resend.mutate(i.id, {
      onSuccess: (r) =>
        r.sendError ? toast.error(r.sendError) : toast.success(`A new link went to ${r.email}; the earlier one no longer works.`),
    });

  return (
    <>
      <ul aria-label="Pending invitations" className="divide-y divide-paper-200">
        {invitations.data.map((i) => {
          const busy = (resend.isPending && resend.variables === i.id) || (revoke.isPending && revoke.variables === i.id);
          return (
            <li key={i.id} className="flex flex-wrap items-center gap-x-4 gap-y-2 px-5 py-3">
              <div className="min-w-0 flex-1">
                <p className="truncate text-sm font-medium text-ink">{i.email}</p>
                <p className="mt-0.5 text-xs text-ink-muted">
                  {ROLE_LABELS[i.role]} ·{" "}
                  {i.sendError ? (
                    <span className="font-medium text-brick">Not sent: {i.sendError}</span>
                  ) : i.state === "expired" ? (
                    <span className="font-medium text-ochre">
                      Link expired <Ago iso={i.expiresAt} /> — resend it
                    </span>
                  ) : (
                    <>
                      sent {i.sentAt ? <Ago iso={i.sentAt} /> : "—"}
                      {i.sendCount > 1 ? ` (${i.sendCount} times)` : ""}
                      {i.invitedBy ? ` by ${i.invitedBy}` : ""}
                    </>
                  )}
                </p>
              </div>
              <div className="flex items-center gap-2">
                <Button
                  size="sm"
                  busy={busy && resend.isPending}
                  disabled={busy}
                  onClick={() => doResend(i)}
                  aria-label={`Resend the invitation to ${i.email}`}
                >
                  Resend
                </Button>
                <Button
                  size="sm"
                  disabled={busy}
                  onClick={() => setRevoking(i)}
                  aria-label={`Revoke the invitation to ${i.email}`}
                  className="text-brick hover:border-brick/50"
                >
                  Revoke
                </Button>
              </div>
            </li>
          );
        })}
      </ul>
      <ConfirmDialog
        open={revoking !== null}
        title={revoking ? `Revoke the invitation to ${revoking.email}?` : ""}
        confirmLabel="Revoke invitation"
        busy={revoke.isPending}
        onConfirm={() =>
          revoking &&
          revoke.mutate(revoking.id, {
            onSuccess: () => toast.success(`The link sent to ${revoking.email} no longer works.`),
            onSettled: () => setRevoking(null),
          })
        }
        onCancel={() => setRevoking(null)}
      >
        {revoking && <p>The link in the message to {revoking.email} stops working at once. You can invite the address again later.</p>}
      </ConfirmDialog>
    </>
  );
}
