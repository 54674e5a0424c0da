import { useState } from "react";
import { NOTICE_KINDS, NOTICE_LABELS, type NoticeKind } from "../../../../shared/schemas/mail";
import { Spinner } from "../../../components/button";
import { LoadError, Notice } from "../../../components/notice";
import { toast } from "../../../lib/toast";
import { useNotices, useUpdateNotices } from "../api/notices";

/** Which notices this person gets by e-mail; each switch saves at once. */
export function NoticeChoices({ email }: { email: string }) {
  const notices = useNotices();
  const update = useUpdateNotices();
  // The switch shows its new place in the same moment it is clicked, until the server answers:
  // a refusal puts it back to what the server holds.
  const [moving, setMoving] = useState<Partial<Record<NoticeKind, boolean>>>({});

  if (notices.isPending) {
    return (
      <p className="flex items-center gap-2 text-sm text-ink-muted">
        <Spinner /> Loading your notices…
      </p>
    );
  }
  if (notices.isError) return <LoadError error={notices.error} onRetry={() => void notices.refetch()} />;

  const set = (kind: NoticeKind, on: boolean) => {
    setMoving((m) => ({ ...m, [kind]: on }));
    update.mutate(
      { [kind]: on },
      {
        onSuccess: () =>
          toast.success(
            on
              ? `You will get “${NOTICE_LABELS[kind].title.toLowerCase()}” by e-mail.`
              : `No more “${NOTICE_LABELS[kind].title.toLowerCase()}” messages.`,
          ),
        onError: (error) => toast.error(`Not saved: ${error.message}`),
        onSettled: () =>
          setMoving((m) => {
            const { [kind]: _settled, ...rest } = m;
            return rest;
          }),
      },
    );
  };

  return (
    <div className="flex flex-col gap-4">
      {!notices.data.mailEnabled && (
        <Notice tone="caution" title="This server sends no e-mail yet">
          An admin has to set up a mail server first. Your choices are kept until then.
        </Notice>
      )}
      <p className="text-sm text-ink-soft">
        Sent to <span className="font-medium text-ink">{email}</span>
        {notices.data.defaults ? ". These are the defaults for your role until you change one." : "."}
      </p>
      <fieldset className="flex flex-col divide-y divide-paper-200 rounded-lg border border-paper-300 bg-white">
        <legend className="sr-only">Notices by e-mail</legend>
        {NOTICE_KINDS.map((kind) => (
          <label key={kind} className="flex cursor-pointer items-start gap-3 px-4 py-3 hover:bg-paper-50">
            <input
              type="checkbox"
              className="mt-0.5 size-4 accent-accent"
              checked={moving[kind] ?? notices.data.notices[kind]}
              disabled={update.isPending}
              onChange={(e) => set(kind, e.target.checked)}
            />
            <span>
              <span className="block text-sm font-medium text-ink">{NOTICE_LABELS[kind].title}</span>
              <span className="block text-xs text-ink-muted">{NOTICE_LABELS[kind].description}</span>
            </span>
          </label>
        ))}
      </fieldset>
    </div>
  );
}
