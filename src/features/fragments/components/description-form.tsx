import { useId, useState, type FormEvent, type KeyboardEvent } from "react";
import { updateFragmentBody, type Fragment } from "../../../../shared/schemas/fragments";
import { Button } from "../../../components/button";
import { TextField } from "../../../components/field";
import { fieldErrorsFrom, type FieldErrors } from "../../../lib/form-errors";

type Field = "title" | "tags" | "notes";

export interface Description {
  title: string | null;
  tags: string[];
  notes: string | null;
}

const tagsFrom = (text: string) =>
  text
    .split(",")
    .map((t) => t.trim())
    .filter(Boolean);

/**
 * Title, tags and notes, checked with the same schema the server uses. Saved with Enter in the
 * title or tags, or the button; Escape leaves the field. Remount (key) when the fragment changes.
 * The title input carries `data-fragment-title`, so a key elsewhere can put the cursor there.
 */
export function DescriptionForm({
  fragment,
  disabled,
  onSave,
}: {
  fragment: Pick<Fragment, "title" | "tags" | "notes">;
  disabled?: boolean;
  onSave: (next: Description) => void;
}) {
  const [title, setTitle] = useState(fragment.title ?? "");
  const [tags, setTags] = useState(fragment.tags.join(", "));
  const [notes, setNotes] = useState(fragment.notes ?? "");
  const [errors, setErrors] = useState<FieldErrors<Field>>({});
  const notesId = useId();

  const changed =
    title.trim() !== (fragment.title ?? "") || tagsFrom(tags).join(",") !== fragment.tags.join(",") || notes !== (fragment.notes ?? "");

  const submit = (event: FormEvent) => {
    event.preventDefault();
    const next = {
      title: title.trim() === "" ? null : title.trim(),
      tags: tagsFrom(tags),
      notes: notes.trim() === "" ? null : notes,
    };
    const parsed = updateFragmentBody.safeParse(next);
    if (!parsed.success) {
      setErrors(fieldErrorsFrom<Field>(parsed.error));
      return;
    }
    setErrors({});
    if (changed) onSave(next);
    (document.activeElement as HTMLElement | null)?.blur();
  };

  const leaveOnEscape = (e: KeyboardEvent<HTMLElement>) => {
    if (e.key === "Escape") {
      e.preventDefault();
      e.currentTarget.blur();
    }
  };

  return (
    <form onSubmit={submit} noValidate aria-label="Describe the fragment" className="flex flex-col gap-3">
      <TextField
        label="Title"
        data-fragment-title=""
        value={title}
        disabled={disabled}
        maxLength={200}
        placeholder="e.g. Blue heron, cut from a 1962 atlas"
        onChange={(e) => setTitle(e.target.value)}
        onKeyDown={leaveOnEscape}
        error={errors.title}
      />
      <TextField
        label="Tags"
        value={tags}
        disabled={disabled}
        placeholder="birds, blue, atlas"
        hint="Separate tags with commas."
        onChange={(e) => setTags(e.target.value)}
        onKeyDown={leaveOnEscape}
        error={errors.tags}
      />
      <div className="flex flex-col gap-1.5">
        <label htmlFor={notesId} className="text-sm font-medium text-ink-soft">
          Notes
        </label>
        <textarea
          id={notesId}
          value={notes}
          disabled={disabled}
          rows={2}
          maxLength={4000}
          onChange={(e) => setNotes(e.target.value)}
          onKeyDown={leaveOnEscape}
          className="rounded-md border border-paper-300 bg-white px-3 py-2 text-sm text-ink hover:border-ink-faint focus-visible:border-accent disabled:bg-paper-100"
        />
        {errors.notes && <p className="text-xs font-medium text-brick">{errors.notes}</p>}
      </div>
      {!disabled && (
        <div>
          <Button type="submit" size="sm" disabled={!changed}>
            Save description
          </Button>
        </div>
      )}
    </form>
  );
}
