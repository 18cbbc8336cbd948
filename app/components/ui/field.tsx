import { useId, type InputHTMLAttributes } from "react";

/** A labelled input with its error message right under it, tied by aria-describedby. */
export function Field({
  label,
  error,
  hint,
  className = "",
  ...input
}: InputHTMLAttributes<HTMLInputElement> & { label: string; error?: string; hint?: string }) {
  const id = useId();
  const errorId = `${id}-error`;
  const hintId = `${id}-hint`;
  const describedBy = [error ? errorId : null, hint ? hintId : null].filter(Boolean).join(" ") || undefined;
  return (
    <div className={`flex flex-col gap-1 ${className}`}>
      <label htmlFor={id} className="font-semibold">
        {label}
      </label>
      {hint ? (
        <p id={hintId} className="text-sm text-ink-soft">
          {hint}
        </p>
      ) : null}
      <input
        id={id}
        aria-invalid={error ? true : undefined}
        aria-describedby={describedBy}
        className={`min-h-11 rounded-lg border-2 bg-card px-3 text-base ${error ? "border-alarm-700" : "border-line focus:border-pine-600"}`}
        {...input}
      />
      {error ? (
        <p id={errorId} className="text-sm font-semibold text-alarm-700">
          {error}
        </p>
      ) : null}
    </div>
  );
}

/** A form-level message (for problems not tied to one field). */
export function FormMessage({ message, tone = "error" }: { message?: string; tone?: "error" | "info" }) {
  if (!message) return null;
  const style = tone === "error" ? "border-alarm-700 bg-alarm-100 text-alarm-700" : "border-pine-600 bg-pine-50 text-pine-900";
  return (
    <p role={tone === "error" ? "alert" : "status"} className={`rounded-lg border-2 px-4 py-3 font-semibold ${style}`}>
      {message}
    </p>
  );
}
