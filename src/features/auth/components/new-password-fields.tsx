import type { ZodType } from "zod";
import { MAX_PASSWORD_BYTES, MIN_PASSWORD_LENGTH } from "../../../../shared/limits";
import { fieldErrorsFrom, type FieldErrors } from "../../../lib/form-errors";
import { TextField } from "../../../components/field";

/** A new password typed twice, as joining and resetting ask for it. */
export function NewPasswordFields({
  labels,
  password,
  repeat,
  onPassword,
  onRepeat,
  errors,
  disabled,
  autoFocus,
}: {
  labels: { password: string; repeat: string };
  password: string;
  repeat: string;
  onPassword: (value: string) => void;
  onRepeat: (value: string) => void;
  errors: { password?: string; repeat?: string };
  disabled: boolean;
  autoFocus?: boolean;
}) {
  return (
    <>
      <TextField
        label={labels.password}
        type="password"
        autoComplete="new-password"
        autoFocus={autoFocus}
        value={password}
        onChange={(e) => onPassword(e.target.value)}
        error={errors.password}
        hint={`${MIN_PASSWORD_LENGTH} to ${MAX_PASSWORD_BYTES} characters (fewer with accents or emoji).`}
        disabled={disabled}
      />
      <TextField
        label={labels.repeat}
        type="password"
        autoComplete="new-password"
        value={repeat}
        onChange={(e) => onRepeat(e.target.value)}
        error={errors.repeat}
        disabled={disabled}
      />
    </>
  );
}

const PASSWORDS_DIFFER = "The two passwords are not the same";

/**
 * The check both forms make before sending: the body against its schema, then the two entries
 * the same. Either the body to send or the field messages to show.
 */
export function checkNewPassword<T, F extends string>(
  schema: ZodType<T>,
  body: unknown,
  password: string,
  repeat: string,
): { data: T } | { errors: FieldErrors<F | "repeat"> } {
  const parsed = schema.safeParse(body);
  if (!parsed.success) return { errors: fieldErrorsFrom<F | "repeat">(parsed.error) };
  if (repeat !== password) return { errors: { repeat: PASSWORDS_DIFFER } as FieldErrors<F | "repeat"> };
  return { data: parsed.data };
}
