import { useRef, useState, type FormEvent } from "react";
import { Link } from "react-router-dom";
import { loginBody, type SessionUser } from "../../../../shared/schemas/auth";
import { Button } from "../../../components/button";
import { TextField } from "../../../components/field";
import { Notice } from "../../../components/notice";
import { paths } from "../../../config/paths";
import { ApiError } from "../../../lib/api-client";
import { fieldErrorsFrom, serverErrorFor, type FieldErrors } from "../../../lib/form-errors";
import { useLogin } from "../api/login";
import { useFocusAfterRefusal } from "../../../lib/use-focus-after-refusal";

type Field = "email" | "password";

/** The page to ask for a new password, with the address typed so far (when there is one). */
const forgotPasswordHref = (email: string) =>
  email.trim() ? `${paths.forgotPassword}?email=${encodeURIComponent(email.trim())}` : paths.forgotPassword;
const FIELDS = ["email", "password"] as const;

export function SignInForm({ onSignedIn }: { onSignedIn: (user: SessionUser) => void }) {
  const loginMutation = useLogin();
  const [email, setEmail] = useState("");
  const [password, setPassword] = useState("");
  const [errors, setErrors] = useState<FieldErrors<Field>>({});
  const [formError, setFormError] = useState<string | null>(null);
  // At the limit, waiting is not the only way in: a new password by e-mail signs in at once.
  const [limited, setLimited] = useState(false);
  const form = useRef<HTMLFormElement>(null);
  const passwordInput = useRef<HTMLInputElement>(null);
  const busy = loginMutation.isPending;
  // A wrong password puts the caret back in the password, selected, ready for the next try.
  const refused = useFocusAfterRefusal(form, busy, passwordInput);

  const submit = (event: FormEvent) => {
    event.preventDefault();
    setFormError(null);
    setLimited(false);
    const parsed = loginBody.safeParse({ email, password });
    if (!parsed.success) {
      setErrors(fieldErrorsFrom<Field>(parsed.error));
      refused();
      return;
    }
    setErrors({});
    loginMutation.mutate(parsed.data, {
      onSuccess: ({ user }) => onSignedIn(user),
      onError: (error) => {
        const { field, message } = serverErrorFor(error, FIELDS);
        if (field) setErrors({ [field]: message });
        else setFormError(message);
        setLimited(error instanceof ApiError && error.status === 429);
        refused();
      },
    });
  };

  return (
    <form ref={form} onSubmit={submit} noValidate className="flex flex-col gap-5" aria-label="Sign in">
      {formError && (
        <Notice tone="error" title="Not signed in">
          {formError}
          {limited && (
            <p className="mt-1.5">
              Or{" "}
              <Link
                to={forgotPasswordHref(email)}
                className="font-medium text-accent underline underline-offset-2 hover:text-accent-strong"
              >
                choose a new password by e-mail
              </Link>
              : its link signs you in straight away.
            </p>
          )}
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
        ref={passwordInput}
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
      <p className="text-center text-sm">
        {/* The address typed so far goes along: nobody types it twice. */}
        <Link to={forgotPasswordHref(email)} className="font-medium text-accent hover:underline">
          Forgot your password?
        </Link>
      </p>
    </form>
  );
}
