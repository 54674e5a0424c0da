import { useState, type FormEvent } from "react";
import { loginBody, type SessionUser } from "../../../../shared/schemas/auth";
import { Button } from "../../../components/button";
import { TextField } from "../../../components/field";
import { Notice } from "../../../components/notice";
import { fieldErrorsFrom, serverErrorFor, type FieldErrors } from "../../../lib/form-errors";
import { useLogin } from "../api/login";

type Field = "email" | "password";
const FIELDS = ["email", "password"] as const;

export function SignInForm({ onSignedIn }: { onSignedIn: (user: SessionUser) => void }) {
  const loginMutation = useLogin();
  const [email, setEmail] = useState("");
  const [password, setPassword] = useState("");
  const [errors, setErrors] = useState<FieldErrors<Field>>({});
  const [formError, setFormError] = useState<string | null>(null);

  const submit = (event: FormEvent) => {
    event.preventDefault();
    setFormError(null);
    const parsed = loginBody.safeParse({ email, password });
    if (!parsed.success) {
      setErrors(fieldErrorsFrom<Field>(parsed.error));
      return;
    }
    setErrors({});
    loginMutation.mutate(parsed.data, {
      onSuccess: ({ user }) => onSignedIn(user),
      onError: (error) => {
        const { field, message } = serverErrorFor(error, FIELDS);
        if (field) setErrors({ [field]: message });
        else setFormError(message);
      },
    });
  };

  const busy = loginMutation.isPending;
  return (
    <form onSubmit={submit} noValidate className="flex flex-col gap-5" aria-label="Sign in">
      {formError && (
        <Notice tone="error" title="Not signed in">
          {formError}
        </Notice>
      )}
      <TextField
        label="E-mail"
        type="email"
        name="email"
        autoComplete="username"
        autoFocus
        value={email}
        onChange={(e) => setEmail(e.target.value)}
        error={errors.email}
        disabled={busy}
      />
      <TextField
        label="Password"
        type="password"
        name="password"
        autoComplete="current-password"
        value={password}
        onChange={(e) => setPassword(e.target.value)}
        error={errors.password}
        disabled={busy}
      />
      <Button type="submit" variant="primary" busy={busy} className="mt-1 w-full">
        {busy ? "Signing in…" : "Sign in"}
      </Button>
    </form>
  );
}
