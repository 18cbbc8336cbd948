import type { ButtonHTMLAttributes } from "react";

type Variant = "primary" | "secondary" | "danger" | "quiet";

const VARIANTS: Record<Variant, string> = {
  primary: "bg-pine-700 text-white hover:bg-pine-800 disabled:bg-pine-600/60",
  secondary: "border-2 border-pine-700 bg-card text-pine-800 hover:bg-pine-50",
  danger: "bg-alarm-700 text-white hover:bg-red-900",
  quiet: "text-pine-800 underline-offset-4 hover:underline",
};

/** Varroute's button: at least 44 px tall so it works with gloves on. */
export function buttonClass(variant: Variant = "primary", extra = "") {
  return `inline-flex min-h-11 items-center justify-center gap-2 rounded-lg px-5 font-semibold transition-colors disabled:cursor-not-allowed ${VARIANTS[variant]} ${extra}`;
}

export function Button({
  variant = "primary",
  className = "",
  type = "button",
  ...props
}: ButtonHTMLAttributes<HTMLButtonElement> & { variant?: Variant }) {
  return <button type={type} className={buttonClass(variant, className)} {...props} />;
}
