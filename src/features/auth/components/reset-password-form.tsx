import { useRef, useState, type FormEvent } from "react";
import { completeResetBody, type CompleteResetBody } from "../../../../shared/schemas/mail";
import type { SessionUser } from "../../../../shared/schemas/auth";
import { Button } from "../../../components/button";
import { Notice } from "../../../components/notice";
import { serverErrorFor, type FieldErrors } from "../../../lib/form-errors";
import { useCompleteReset } from "../api/password-reset";
import { checkNewPassword, NewPasswordFields } from "./new-password-fields";
import { useFocusAfterRefusal } from "../../../lib/use-focus-after-refusal";

type Field = "password" | "repeat";

/** Sets the new password from a reset link; every other session of the account ends. */
export function ResetPasswordForm({ token, email, onDone }: { token: string; email: string; onDone: (user: SessionUser) => void }) {
  const complete = useCompleteReset();
  const [password, setPassword] = useState("");
  const [repeat, setRepeat] = useState("");
  const [errors, setErrors] = useState<FieldErrors<Field>>({});
  const [formError, setFormError] = useState<string | null>(null);
  const form = useRef<HTMLFormElement>(null);
  const busy = complete.isPending;
  // A refused entry gets the caret back, in the field that says what is wrong.
  const refused = useFocusAfterRefusal(form, busy);

  const submit = (event: FormEvent) => {
    event.preventDefault();
    setFormError(null);
    const checked = checkNewPassword<CompleteResetBody, Field>(completeResetBody, { token, password }, password, repeat);
    if ("errors" in checked) {
      setErrors(checked.errors);
      refused();
      return;
    }
    setErrors({});
    complete.mutate(checked.data, {
      onSuccess: ({ user }) => onDone(user),
      onError: (error) => {
        const { field, message } = serverErrorFor(error, ["password"] as const);
        if (field) setErrors({ password: message });
        else setFormError(message);
        refused();
      },
    });
  };

  return (
    <form ref={form} onSubmit={submit} noValidate aria-label="Choose a new password" className="flex flex-col gap-5">
      <p className="text-sm text-ink-soft">
        For <span className="font-medium text-ink">{email}</span>. You will be signed out everywhere else.
      </p>
      {formError && <Notice tone="error">{formError}</Notice>}
      <input type="email" autoComplete="username" value={email} readOnly hidden />
      <NewPasswordFields
        labels={{ password: "New password", repeat: "Repeat the new password" }}
        password={password}
        repeat={repeat}
        onPassword={setPassword}
        onRepeat={setRepeat}
        errors={errors}
        disabled={busy}
        autoFocus
      />
      <Button type="submit" variant="primary" busy={busy} className="w-full">
        Save and sign in
      </Button>
    </form>
  );
}
