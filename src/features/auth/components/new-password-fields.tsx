import { MIN_PASSWORD_LENGTH } from "../../../../shared/limits";
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
        hint={`At least ${MIN_PASSWORD_LENGTH} characters.`}
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

/** The check both forms make before sending: the two entries match. */
export const PASSWORDS_DIFFER = "The two passwords are not the same";
