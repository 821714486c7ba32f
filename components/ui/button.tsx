import clsx from "clsx";
import type { ButtonHTMLAttributes } from "react";

type Variant = "primary" | "secondary" | "ghost" | "danger";

const variants: Record<Variant, string> = {
  primary: "bg-action text-action-ink border-action hover:bg-action-strong hover:border-action-strong",
  secondary: "bg-surface text-ink border-line hover:border-action hover:text-action",
  ghost: "bg-transparent text-muted border-transparent hover:text-ink hover:bg-sunken",
  danger: "bg-surface text-danger border-danger/60 hover:bg-danger hover:text-surface",
};

export function buttonClass(variant: Variant = "secondary", size: "sm" | "md" = "md"): string {
  return clsx(
    "inline-flex items-center justify-center gap-2 rounded border font-medium transition-colors disabled:cursor-not-allowed disabled:opacity-50",
    size === "sm" ? "px-2.5 py-1 text-[13px]" : "px-3.5 py-1.5 text-sm",
    variants[variant],
  );
}

export function Button({
  variant = "secondary",
  size = "md",
  className,
  type = "button",
  ...props
}: ButtonHTMLAttributes<HTMLButtonElement> & { variant?: Variant; size?: "sm" | "md" }) {
  return <button type={type} className={clsx(buttonClass(variant, size), className)} {...props} />;
}
