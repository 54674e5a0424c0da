import { useRef, useState, type FormEvent } from "react";
import { Link } from "react-router-dom";
import { changePasswordBody, type ChangePasswordBody } from "../../../../shared/schemas/account";
import type { SessionUser } from "../../../../shared/schemas/auth";
import { Button } from "../../../components/button";
import { TextField } from "../../../components/field";
import { Notice } from "../../../components/notice";
import { fieldErrorsFrom, serverErrorFor, type FieldErrors } from "../../../lib/form-errors";
import { MAX_PASSWORD_BYTES, MIN_PASSWORD_LENGTH } from "../../../../shared/limits";
import { useChangePassword } from "../api/account";
import { useFocusAfterRefusal } from "../../../lib/use-focus-after-refusal";

type Field = "currentPassword" | "newPassword" | "repeat";

const PASSWORDS_DIFFER = "The two new passwords are not the same";

/**
 * A new password while signed in: the current one first, the new one twice. On success this
 * browser stays signed in and every other session of the account ends; the form says how many.
 */
export function ChangePasswordForm({
  email,
  forgotHref,
  onChanged,
}: {
  email: string;
  forgotHref: string;
  onChanged: (user: SessionUser) => void;
}) {
  const change = useChangePassword();
  const [current, setCurrent] = useState("");
  const [next, setNext] = useState("");
  const [repeat, setRepeat] = useState("");
  const [errors, setErrors] = useState<FieldErrors<Field>>({});
  const [formError, setFormError] = useState<string | null>(null);
  const [done, setDone] = useState<string | null>(null);
  const form = useRef<HTMLFormElement>(null);
  const currentInput = useRef<HTMLInputElement>(null);
  const busy = change.isPending;
  // A wrong current password, a short new one: the caret goes back to the field at fault.
  const refused = useFocusAfterRefusal(form, busy, currentInput);

  const submit = (event: FormEvent) => {
    event.preventDefault();
    setFormError(null);
    setDone(null);
    const parsed = changePasswordBody.safeParse({ currentPassword: current, newPassword: next } satisfies ChangePasswordBody);
    if (!parsed.success) {
      setErrors(fieldErrorsFrom<Field>(parsed.error));
      refused();
      return;
    }
    if (repeat !== next) {
      setErrors({ repeat: PASSWORDS_DIFFER });
      refused();
      return;
    }
    setErrors({});
    change.mutate(parsed.data, {
      onSuccess: ({ user, signedOutElsewhere }) => {
        setCurrent("");
        setNext("");
        setRepeat("");
        setDone(
          signedOutElsewhere === 0
            ? "Your password is changed. You were signed in nowhere else."
            : `Your password is changed. ${signedOutElsewhere} other ${signedOutElsewhere === 1 ? "session was" : "sessions were"} signed out; sign in there with the new one.`,
        );
        onChanged(user);
      },
      onError: (error) => {
        const { field, message } = serverErrorFor(error, ["currentPassword", "newPassword"] as const);
        if (field) setErrors({ [field]: message });
        else setFormError(message);
        refused();
      },
    });
  };

  return (
    <form ref={form} onSubmit={submit} noValidate aria-label="Change your password" className="flex flex-col gap-4">
      {done && (
        <p role="status" className="rounded-md border border-accent/30 bg-accent-faint px-3 py-2 text-sm text-ink">
          {done}
        </p>
      )}
      {formError && <Notice tone="error">{formError}</Notice>}
      {/* For password managers: which account this is. */}
      <input type="email" autoComplete="username" value={email} readOnly hidden />
      <TextField
        ref={currentInput}
        label="Current password"
        type="password"
        autoComplete="current-password"
        value={current}
        onChange={(e) => setCurrent(e.target.value)}
        error={errors.currentPassword}
        disabled={busy}
      />
      <TextField
        label="New password"
        type="password"
        autoComplete="new-password"
        value={next}
        onChange={(e) => setNext(e.target.value)}
        error={errors.newPassword}
        hint={`${MIN_PASSWORD_LENGTH} to ${MAX_PASSWORD_BYTES} characters (fewer with accents or emoji).`}
        disabled={busy}
      />
      <TextField
        label="Repeat the new password"
        type="password"
        autoComplete="new-password"
        value={repeat}
        onChange={(e) => setRepeat(e.target.value)}
        error={errors.repeat}
        disabled={busy}
      />
      <p className="text-xs text-ink-muted">You stay signed in here; every other browser signed in as you is signed out.</p>
      <div className="flex flex-wrap items-center gap-x-4 gap-y-2">
        <Button type="submit" variant="primary" busy={busy}>
          Change password
        </Button>
        <Link to={forgotHref} className="text-sm font-medium text-accent underline underline-offset-2 hover:text-accent-strong">
          Forgot it? Choose a new one by e-mail
        </Link>
      </div>
    </form>
  );
}
