import { useState, type FormEvent } from "react";
import { createIntakeBody, type Intake } from "../../../../shared/schemas/scans";
import { Button } from "../../../components/button";
import { TextField } from "../../../components/field";
import { toast } from "../../../lib/toast";
import { formatDateTime } from "../../../lib/time";
import { useCreateIntake } from "../api/create-intake";

function suggestedName(): string {
  const day = new Intl.DateTimeFormat(undefined, {
    day: "numeric",
    month: "long",
    year: "numeric",
  });
  return `Session of ${day.format(new Date())}`;
}

/** The intake new scans go into, and a way to start a new one for a new scanning session. */
export function IntakeBar({ current }: { current?: Intake }) {
  const [open, setOpen] = useState(false);
  const [name, setName] = useState("");
  const [error, setError] = useState<string | undefined>();
  const create = useCreateIntake();

  const start = () => {
    setName(suggestedName());
    setError(undefined);
    setOpen(true);
  };

  const submit = (event: FormEvent) => {
    event.preventDefault();
    const parsed = createIntakeBody.safeParse({ name });
    if (!parsed.success) {
      setError(parsed.error.issues[0]?.message);
      return;
    }
    create.mutate(parsed.data.name, {
      onSuccess: (intake) => {
        setOpen(false);
        toast.success(`New scans now go into ${intake.name}.`);
      },
      onError: (err) => setError(err.message),
    });
  };

  return (
    <div className="flex flex-wrap items-end justify-between gap-4">
      <div>
        <p className="text-xs font-semibold tracking-wide text-ink-muted uppercase">Current intake</p>
        {current ? (
          <p className="mt-1">
            <span className="font-semibold text-ink">{current.name}</span>
            <span className="ml-2 text-sm text-ink-muted">
              <span className="figure">{current.scanCount}</span> {current.scanCount === 1 ? "scan" : "scans"} · since{" "}
              {formatDateTime(current.createdAt)}
            </span>
          </p>
        ) : (
          <p className="mt-1 text-sm text-ink-muted">None yet: the first scan starts one.</p>
        )}
      </div>
      {open ? (
        <form onSubmit={submit} className="flex items-end gap-3" aria-label="Start a new intake">
          <TextField
            label="Name of the new intake"
            value={name}
            onChange={(e) => setName(e.target.value)}
            error={error}
            autoFocus
            fieldClassName="w-80"
            maxLength={120}
          />
          <Button type="submit" variant="primary" busy={create.isPending}>
            Start intake
          </Button>
          <Button variant="quiet" onClick={() => setOpen(false)}>
            Cancel
          </Button>
        </form>
      ) : (
        <Button onClick={start}>Start a new intake</Button>
      )}
    </div>
  );
}
