import { useRef, useState, type FormEvent, type KeyboardEvent } from "react";
import { renameSelfBody } from "../../../../shared/schemas/account";
import type { SessionUser } from "../../../../shared/schemas/auth";
import { Button } from "../../../components/button";
import { TextField } from "../../../components/field";
import { fieldErrorsFrom, serverErrorFor } from "../../../lib/form-errors";
import { toast } from "../../../lib/toast";
import { useRenameSelf } from "../api/account";

/** One's own name as others see it (the rail, the users list, the trail), changed in place. */
export function OwnName({ name, onRenamed }: { name: string; onRenamed: (user: SessionUser) => void }) {
  const rename = useRenameSelf();
  const [editing, setEditing] = useState(false);
  const [draft, setDraft] = useState(name);
  const [error, setError] = useState<string | undefined>();
  const changeButton = useRef<HTMLButtonElement>(null);

  const close = () => {
    setEditing(false);
    setError(undefined);
    // Back to where the person started, so the keyboard path goes on from there.
    requestAnimationFrame(() => changeButton.current?.focus());
  };

  const submit = (event: FormEvent) => {
    event.preventDefault();
    const parsed = renameSelfBody.safeParse({ name: draft });
    if (!parsed.success) return setError(fieldErrorsFrom<"name">(parsed.error).name);
    if (parsed.data.name === name) return close();
    rename.mutate(parsed.data, {
      onSuccess: ({ user }) => {
        onRenamed(user);
        toast.success(`You are now “${user.name}” in this studio.`);
        close();
      },
      onError: (e) => setError(serverErrorFor(e, ["name"] as const).message),
    });
  };

  const onKeyDown = (event: KeyboardEvent) => {
    if (event.key === "Escape") {
      event.preventDefault();
      close();
    }
  };

  if (!editing) {
    return (
      <div className="flex items-baseline justify-between gap-3">
        <span className="font-medium text-ink">{name}</span>
        <Button
          ref={changeButton}
          size="sm"
          variant="quiet"
          onClick={() => {
            setDraft(name);
            setEditing(true);
          }}
          aria-label="Change your name"
        >
          Change
        </Button>
      </div>
    );
  }
  return (
    <form onSubmit={submit} onKeyDown={onKeyDown} noValidate aria-label="Your name" className="flex flex-col gap-2">
      <TextField
        label="Your name"
        value={draft}
        onChange={(e) => setDraft(e.target.value)}
        error={error}
        hint="As the rest of the studio sees it. Esc leaves it as it was."
        autoComplete="name"
        autoFocus
        disabled={rename.isPending}
      />
      <div className="flex gap-2">
        <Button type="submit" size="sm" variant="primary" busy={rename.isPending}>
          Save name
        </Button>
        <Button size="sm" variant="quiet" onClick={close} disabled={rename.isPending}>
          Keep “{name}”
        </Button>
      </div>
    </form>
  );
}
