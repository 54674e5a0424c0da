import { useRef, useState, type FormEvent } from "react";
import { ROLE_DESCRIPTIONS, ROLE_LABELS } from "../../../../shared/roles";
import { acceptInvitationBody, type AcceptInvitationBody, type InvitationPreview } from "../../../../shared/schemas/mail";
import type { SessionUser } from "../../../../shared/schemas/auth";
import { Button } from "../../../components/button";
import { TextField } from "../../../components/field";
import { Notice } from "../../../components/notice";
import { serverErrorFor, type FieldErrors } from "../../../lib/form-errors";
import { useAcceptInvitation } from "../api/invitation";
import { checkNewPassword, NewPasswordFields } from "./new-password-fields";
import { useFocusAfterRefusal } from "../../../lib/use-focus-after-refusal";

type Field = "name" | "password" | "repeat";
const FIELDS = ["name", "password"] as const;

/** The invitee names themselves and chooses a password; accepting signs them in. */
export function AcceptInviteForm({
  token,
  invitation,
  onAccepted,
}: {
  token: string;
  invitation: InvitationPreview;
  onAccepted: (user: SessionUser) => void;
}) {
  const accept = useAcceptInvitation();
  const [name, setName] = useState("");
  const [password, setPassword] = useState("");
  const [repeat, setRepeat] = useState("");
  const [errors, setErrors] = useState<FieldErrors<Field>>({});
  const [formError, setFormError] = useState<string | null>(null);
  const form = useRef<HTMLFormElement>(null);
  const busy = accept.isPending;
  // A refused entry gets the caret back, in the field that says what is wrong.
  const refused = useFocusAfterRefusal(form, busy);

  const submit = (event: FormEvent) => {
    event.preventDefault();
    setFormError(null);
    const checked = checkNewPassword<AcceptInvitationBody, Field>(acceptInvitationBody, { token, name, password }, password, repeat);
    if ("errors" in checked) {
      setErrors(checked.errors);
      refused();
      return;
    }
    setErrors({});
    accept.mutate(checked.data, {
      onSuccess: ({ user }) => onAccepted(user),
      onError: (error) => {
        const { field, message } = serverErrorFor(error, FIELDS);
        if (field) setErrors({ [field]: message });
        else setFormError(message);
        refused();
      },
    });
  };

  return (
    <form ref={form} onSubmit={submit} noValidate aria-label="Accept the invitation" className="flex flex-col gap-5">
      <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-1.5 rounded-lg bg-paper-100 px-4 py-3 text-sm">
        <dt className="text-ink-muted">E-mail</dt>
        <dd className="truncate font-medium text-ink">{invitation.email}</dd>
        <dt className="text-ink-muted">Role</dt>
        <dd className="text-ink">
          <span className="font-medium">{ROLE_LABELS[invitation.role]}</span>
          <span className="block text-xs text-ink-muted">{ROLE_DESCRIPTIONS[invitation.role]}</span>
        </dd>
      </dl>
      {formError && (
        <Notice tone="error" title="Not accepted">
          {formError}
        </Notice>
      )}
      <TextField
        label="Your name"
        autoComplete="name"
        autoFocus
        value={name}
        onChange={(e) => setName(e.target.value)}
        error={errors.name}
        hint="As the studio will see it beside your work."
        disabled={busy}
      />
      <NewPasswordFields
        labels={{ password: "Choose a password", repeat: "Repeat the password" }}
        password={password}
        repeat={repeat}
        onPassword={setPassword}
        onRepeat={setRepeat}
        errors={errors}
        disabled={busy}
      />
      <Button type="submit" variant="primary" busy={busy} className="mt-1 w-full">
        {busy ? "Joining…" : "Join the studio"}
      </Button>
    </form>
  );
}
