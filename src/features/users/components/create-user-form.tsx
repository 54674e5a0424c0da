import { useRef, useState, type FormEvent } from "react";
import { MAX_PASSWORD_BYTES, MIN_PASSWORD_LENGTH } from "../../../../shared/limits";
import { ROLES, ROLE_DESCRIPTIONS, ROLE_LABELS, type Role } from "../../../../shared/roles";
import { createUserBody } from "../../../../shared/schemas/users";
import { Button } from "../../../components/button";
import { SelectField, TextField } from "../../../components/field";
import { Notice } from "../../../components/notice";
import { fieldErrorsFrom, serverErrorFor, type FieldErrors } from "../../../lib/form-errors";
import { toast } from "../../../lib/toast";
import { useCreateUser } from "../api/create-user";
import { useFocusAfterRefusal } from "../../../lib/use-focus-after-refusal";

type Field = "email" | "name" | "role" | "password";
const FIELDS = ["email", "name", "role", "password"] as const;

const EMPTY = { name: "", email: "", role: "operator" as Role, password: "" };

/** A new account with a role. Checked with the same schema the server uses before it is sent. */
export function CreateUserForm() {
  const create = useCreateUser();
  const [values, setValues] = useState(EMPTY);
  const [errors, setErrors] = useState<FieldErrors<Field>>({});
  const [formError, setFormError] = useState<string | null>(null);
  const form = useRef<HTMLFormElement>(null);
  const nameInput = useRef<HTMLInputElement>(null);
  // The field at fault after a refusal; the empty Name after a user is made, for the next one.
  const refocus = useFocusAfterRefusal(form, create.isPending, nameInput);

  const set = <K extends keyof typeof EMPTY>(key: K, value: (typeof EMPTY)[K]) => {
    setValues((v) => ({ ...v, [key]: value }));
    if (errors[key]) setErrors((e) => ({ ...e, [key]: undefined }));
  };

  const submit = (event: FormEvent) => {
    event.preventDefault();
    setFormError(null);
    const parsed = createUserBody.safeParse(values);
    if (!parsed.success) {
      setErrors(fieldErrorsFrom<Field>(parsed.error));
      refocus();
      return;
    }
    setErrors({});
    create.mutate(parsed.data, {
      onSuccess: (user) => {
        toast.success(`${user.name} can now sign in as ${ROLE_LABELS[user.role].toLowerCase()}.`);
        setValues(EMPTY);
        refocus();
      },
      onError: (error) => {
        const { field, message } = serverErrorFor(error, FIELDS);
        if (field) setErrors({ [field]: message });
        else setFormError(message);
        refocus();
      },
    });
  };

  return (
    <form ref={form} onSubmit={submit} noValidate aria-label="Create a user" className="flex flex-col gap-4">
      {formError && <Notice tone="error">{formError}</Notice>}
      <TextField
        ref={nameInput}
        label="Name"
        autoComplete="off"
        value={values.name}
        onChange={(e) => set("name", e.target.value)}
        error={errors.name}
      />
      <TextField
        label="E-mail"
        type="email"
        autoComplete="off"
        value={values.email}
        onChange={(e) => set("email", e.target.value)}
        error={errors.email}
      />
      <SelectField
        label="Role"
        value={values.role}
        onChange={(e) => set("role", e.target.value as Role)}
        error={errors.role}
        hint={ROLE_DESCRIPTIONS[values.role]}
      >
        {ROLES.map((role) => (
          <option key={role} value={role}>
            {ROLE_LABELS[role]}
          </option>
        ))}
      </SelectField>
      <TextField
        label="First password"
        type="password"
        autoComplete="new-password"
        value={values.password}
        onChange={(e) => set("password", e.target.value)}
        error={errors.password}
        hint={`${MIN_PASSWORD_LENGTH} to ${MAX_PASSWORD_BYTES} characters (fewer with accents or emoji). Pass it on in person or by phone.`}
      />
      <div>
        <Button type="submit" variant="primary" busy={create.isPending}>
          Create user
        </Button>
      </div>
    </form>
  );
}
