import { useRef, useState, type FormEvent } from "react";
import { ROLES, ROLE_DESCRIPTIONS, ROLE_LABELS, type Role } from "../../../../shared/roles";
import { createInvitationBody } from "../../../../shared/schemas/mail";
import { Button } from "../../../components/button";
import { SelectField, TextField } from "../../../components/field";
import { Notice } from "../../../components/notice";
import { fieldErrorsFrom, serverErrorFor, type FieldErrors } from "../../../lib/form-errors";
import { toast } from "../../../lib/toast";
import { useCreateInvitation } from "../api/invitations";
import { useFocusAfterRefusal } from "../../../lib/use-focus-after-refusal";

type Field = "email" | "role";
const FIELDS = ["email", "role"] as const;

/** Invite someone by e-mail: they choose their own name and password from the link. */
export function InviteForm() {
  const create = useCreateInvitation();
  const [email, setEmail] = useState("");
  const [role, setRole] = useState<Role>("viewer");
  const [errors, setErrors] = useState<FieldErrors<Field>>({});
  const [formError, setFormError] = useState<string | null>(null);
  const form = useRef<HTMLFormElement>(null);
  const emailInput = useRef<HTMLInputElement>(null);
  // After a refusal the caret goes to the field at fault; after a sent invitation to the empty
  // E-mail, for the next address (a studio invites its people one after another).
  const refocus = useFocusAfterRefusal(form, create.isPending, emailInput);

  const submit = (event: FormEvent) => {
    event.preventDefault();
    setFormError(null);
    const parsed = createInvitationBody.safeParse({ email, role });
    if (!parsed.success) {
      setErrors(fieldErrorsFrom<Field>(parsed.error));
      refocus();
      return;
    }
    setErrors({});
    create.mutate(parsed.data, {
      onSuccess: (invitation) => {
        if (invitation.sendError) {
          toast.error(`Saved, but not sent: ${invitation.sendError} Use Resend once mail works.`);
        } else {
          toast.success(`Invitation sent to ${invitation.email}.`);
        }
        setEmail("");
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
    <form ref={form} onSubmit={submit} noValidate aria-label="Invite someone" className="flex flex-col gap-4">
      {formError && <Notice tone="error">{formError}</Notice>}
      <TextField
        ref={emailInput}
        label="E-mail"
        type="email"
        autoComplete="off"
        value={email}
        onChange={(e) => {
          setEmail(e.target.value);
          if (errors.email) setErrors({});
        }}
        error={errors.email}
        hint="They get a link to choose their name and password. It works once."
      />
      <SelectField
        label="Role"
        value={role}
        onChange={(e) => setRole(e.target.value as Role)}
        error={errors.role}
        hint={ROLE_DESCRIPTIONS[role]}
      >
        {ROLES.map((r) => (
          <option key={r} value={r}>
            {ROLE_LABELS[r]}
          </option>
        ))}
      </SelectField>
      <div>
        <Button type="submit" variant="primary" busy={create.isPending}>
          Send invitation
        </Button>
      </div>
    </form>
  );
}
