import clsx from "clsx";
import { forwardRef, useId, type InputHTMLAttributes, type ReactNode, type SelectHTMLAttributes } from "react";

export const inputClass =
  "w-full rounded border border-line bg-surface px-3 py-1.5 text-ink placeholder:text-muted/70 focus:border-action focus:outline-none aria-[invalid=true]:border-danger";

interface FieldProps extends InputHTMLAttributes<HTMLInputElement> {
  label: string;
  error?: string;
  hint?: ReactNode;
}

/** A labelled input whose error text is tied to it for assistive technology. */
export const Field = forwardRef<HTMLInputElement, FieldProps>(function Field({ label, error, hint, className, id, ...props }, ref) {
  const generatedId = useId();
  const inputId = id ?? generatedId;
  return (
    <div className={clsx("space-y-1", className)}>
      <label htmlFor={inputId} className="block text-sm font-medium">
        {label}
      </label>
      <input
        ref={ref}
        id={inputId}
        aria-invalid={error ? true : undefined}
        aria-describedby={error ? `${inputId}-error` : undefined}
        className={inputClass}
        {...props}
      />
      {hint && !error ? <p className="text-xs text-muted">{hint}</p> : null}
      {error ? (
        <p id={`${inputId}-error`} role="alert" className="text-xs font-medium text-danger">
          {error}
        </p>
      ) : null}
    </div>
  );
});

interface SelectFieldProps extends SelectHTMLAttributes<HTMLSelectElement> {
  label: string;
  error?: string;
}

export const SelectField = forwardRef<HTMLSelectElement, SelectFieldProps>(function SelectField({ label, error, className, id, children, ...props }, ref) {
  const generatedId = useId();
  const selectId = id ?? generatedId;
  return (
    <div className={clsx("space-y-1", className)}>
      <label htmlFor={selectId} className="block text-sm font-medium">
        {label}
      </label>
      <select ref={ref} id={selectId} aria-invalid={error ? true : undefined} className={inputClass} {...props}>
        {children}
      </select>
      {error ? (
        <p role="alert" className="text-xs font-medium text-danger">
          {error}
        </p>
      ) : null}
    </div>
  );
});
