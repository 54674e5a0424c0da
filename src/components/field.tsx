import { useId, type InputHTMLAttributes, type ReactNode, type Ref, type SelectHTMLAttributes } from "react";
import { cn } from "../lib/cn";

export const inputClass =
  "h-10 rounded-md border border-paper-300 bg-white px-3 text-sm text-ink placeholder:text-ink-muted hover:border-ink-faint focus-visible:border-accent disabled:bg-paper-100 disabled:text-ink-muted aria-[invalid=true]:border-brick";

interface FieldShellProps {
  label: ReactNode;
  hint?: ReactNode;
  error?: string;
  id: string;
  children: ReactNode;
  className?: string;
}

function FieldShell({ label, hint, error, id, children, className }: FieldShellProps) {
  return (
    <div className={cn("flex flex-col gap-1.5", className)}>
      <label htmlFor={id} className="text-sm font-medium text-ink-soft">
        {label}
      </label>
      {children}
      {hint && !error && (
        <p id={`${id}-hint`} className="text-xs text-ink-muted">
          {hint}
        </p>
      )}
      {error && (
        <p id={`${id}-error`} className="text-xs font-medium text-brick">
          {error}
        </p>
      )}
    </div>
  );
}

type TextFieldProps = Omit<InputHTMLAttributes<HTMLInputElement>, "id"> & {
  /** The input itself (to focus it after an action that fills it in). */
  ref?: Ref<HTMLInputElement>;
  label: ReactNode;
  hint?: ReactNode;
  error?: string;
  fieldClassName?: string;
};

/** A labelled input whose error text is tied to it with aria-describedby. */
export function TextField({ label, hint, error, fieldClassName, className, ...rest }: TextFieldProps) {
  const id = useId();
  const describedBy = error ? `${id}-error` : hint ? `${id}-hint` : undefined;
  return (
    <FieldShell label={label} hint={hint} error={error} id={id} className={fieldClassName}>
      <input
        id={id}
        aria-invalid={error ? true : undefined}
        aria-describedby={describedBy}
        className={cn(inputClass, "w-full", className)}
        {...rest}
      />
    </FieldShell>
  );
}

type SelectFieldProps = Omit<SelectHTMLAttributes<HTMLSelectElement>, "id"> & {
  label: ReactNode;
  hint?: ReactNode;
  error?: string;
  fieldClassName?: string;
};

export function SelectField({ label, hint, error, fieldClassName, className, children, ...rest }: SelectFieldProps) {
  const id = useId();
  const describedBy = error ? `${id}-error` : hint ? `${id}-hint` : undefined;
  return (
    <FieldShell label={label} hint={hint} error={error} id={id} className={fieldClassName}>
      <select
        id={id}
        aria-invalid={error ? true : undefined}
        aria-describedby={describedBy}
        className={cn(inputClass, "w-full pr-8", className)}
        {...rest}
      >
        {children}
      </select>
    </FieldShell>
  );
}
