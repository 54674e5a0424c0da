import { useId } from "react";
import { MAX_RECIPE_NAME } from "../../../../shared/schemas/recipes";
import { TextField, inputClass } from "../../../components/field";
import { cn } from "../../../lib/cn";

/** The recipe's name and a line on what it is for; saved with the steps. */
export function DetailsForm({
  name,
  description,
  builtIn,
  nameError,
  onName,
  onDescription,
}: {
  name: string;
  description: string;
  builtIn: boolean;
  nameError?: string;
  onName: (name: string) => void;
  onDescription: (description: string) => void;
}) {
  const id = useId();
  return (
    <div className="flex flex-col gap-4">
      <TextField
        label="Name"
        value={name}
        maxLength={MAX_RECIPE_NAME + 10}
        disabled={builtIn}
        error={nameError}
        hint={builtIn ? "The built-in recipe keeps its name; make a copy to name your own." : undefined}
        onChange={(e) => onName(e.target.value)}
      />
      <div className="flex flex-col gap-1.5">
        <label htmlFor={id} className="text-sm font-medium text-ink-soft">
          What it is for <span className="font-normal text-ink-muted">(optional)</span>
        </label>
        <textarea
          id={id}
          rows={2}
          maxLength={500}
          value={description}
          placeholder="e.g. Magazine cut-outs on the white lid"
          onChange={(e) => onDescription(e.target.value)}
          className={cn(inputClass, "h-auto py-2")}
        />
      </div>
    </div>
  );
}
