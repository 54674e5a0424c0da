import { useState, type FormEvent } from "react";
import { requestResetBody } from "../../../../shared/schemas/mail";
import { Button } from "../../../components/button";
import { TextField } from "../../../components/field";
import { Notice } from "../../../components/notice";
import { fieldErrorsFrom, serverErrorFor, type FieldErrors } from "../../../lib/form-errors";
import { useRequestReset } from "../api/password-reset";

/** Asks for a reset link. The answer is the same for every address, so it never tells who is here. */
export function ForgotPasswordForm({ initialEmail = "" }: { initialEmail?: string }) {
  const request = useRequestReset();
  const [email, setEmail] = useState(initialEmail);
  const [errors, setErrors] = useState<FieldErrors<"email">>({});
  const [formError, setFormError] = useState<string | null>(null);

  const submit = (event: FormEvent) => {
    event.preventDefault();
    setFormError(null);
    const parsed = requestResetBody.safeParse({ email });
    if (!parsed.success) {
      setErrors(fieldErrorsFrom<"email">(parsed.error));
      return;
    }
    setErrors({});
    request.mutate(parsed.data, {
      onError: (error) => {
        const { field, message } = serverErrorFor(error, ["email"] as const);
        if (field) setErrors({ email: message });
        else setFormError(message);
      },
    });
  };

  if (request.isSuccess) {
    return (
      <div role="status" className="flex flex-col gap-3 text-sm text-ink-soft">
        <p className="font-semibold text-ink">Check your mail</p>
        <p>{request.data.message}</p>
        <p className="text-xs text-ink-muted">Nothing after a few minutes? Look in the spam folder, or ask a studio admin.</p>
      </div>
    );
  }
  return (
    <form onSubmit={submit} noValidate aria-label="Ask for a new password" className="flex flex-col gap-5">
      {formError && <Notice tone="error">{formError}</Notice>}
      <TextField
        label="E-mail"
        type="email"
        autoComplete="username"
        autoFocus
        value={email}
        onChange={(e) => setEmail(e.target.value)}
        error={errors.email}
        hint="The address you sign in with."
        disabled={request.isPending}
      />
      <Button type="submit" variant="primary" busy={request.isPending} className="w-full">
        Send me a link
      </Button>
    </form>
  );
}
