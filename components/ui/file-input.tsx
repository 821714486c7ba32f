"use client";

import clsx from "clsx";
import { forwardRef, useId, type InputHTMLAttributes } from "react";

/** "10 MB", "488 kB": sizes in binary units, as the server states its own limits (10 MB = 10 × 1024² bytes). */
export function formatBytes(bytes: number): string {
  if (bytes >= 1024 * 1024) return `${Number((bytes / (1024 * 1024)).toFixed(1))} MB`;
  if (bytes >= 1024) return `${Math.round(bytes / 1024)} kB`;
  return `${bytes} bytes`;
}

/**
 * Why a file is refused before it is sent, or null when it fits. The browser
 * checks the size so a too-large file never travels; the server checks again.
 */
export function fileTooLarge(file: File, maxBytes: number): string | null {
  if (file.size <= maxBytes) return null;
  return `The file "${file.name}" is ${formatBytes(file.size)}; the limit is ${formatBytes(maxBytes)}. Nothing was sent.`;
}

interface FileInputProps extends Omit<InputHTMLAttributes<HTMLInputElement>, "type" | "onChange"> {
  label: string;
  /** Largest accepted file; stated under the input and checked before `onFile` sees the file. */
  maxBytes: number;
  /** What the file should be, shown with the limit ("A .model.json file"). */
  hint?: string;
  /** A chosen file that fits, or null when the choice was cleared or refused. */
  onFile: (file: File | null) => void;
  /** Called with the refusal when the chosen file is too large (the input is cleared). */
  onRefused: (message: string) => void;
  /** The label beside the input (a row) rather than above it. */
  inline?: boolean;
}

/** A labelled file input in the house style, with its size limit stated and applied. */
export const FileInput = forwardRef<HTMLInputElement, FileInputProps>(function FileInput(
  { label, maxBytes, hint, onFile, onRefused, inline = false, className, id, ...props },
  ref,
) {
  const generatedId = useId();
  const inputId = id ?? generatedId;
  return (
    <div className={clsx(inline ? "flex flex-wrap items-center gap-x-2 gap-y-1" : "space-y-1", className)}>
      <label htmlFor={inputId} className={clsx("text-sm", inline ? "" : "block font-medium")}>
        {label}
      </label>
      <input
        ref={ref}
        id={inputId}
        type="file"
        aria-describedby={`${inputId}-limit`}
        className={clsx(
          "block min-w-0 max-w-full text-sm text-muted",
          "file:mr-3 file:cursor-pointer file:rounded file:border file:border-action file:bg-action-soft file:px-3 file:py-1 file:text-sm file:font-medium file:text-action",
          "hover:file:bg-action hover:file:text-action-ink focus-visible:outline-2 focus-visible:outline-action",
        )}
        onChange={(event) => {
          const file = event.target.files?.[0] ?? null;
          const refusal = file ? fileTooLarge(file, maxBytes) : null;
          if (refusal) {
            event.target.value = "";
            onFile(null);
            onRefused(refusal);
            return;
          }
          onFile(file);
        }}
        {...props}
      />
      <p id={`${inputId}-limit`} className="basis-full text-xs text-muted" data-testid="file-limit">
        {hint ? `${hint}, up to ${formatBytes(maxBytes)}.` : `Up to ${formatBytes(maxBytes)}.`}
      </p>
    </div>
  );
});
