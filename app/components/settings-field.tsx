import { useId } from "react";
import type { SettingsFieldInfo } from "~/domain/settings";

/** One setting: label, input with its unit, a one-line explanation, the source, and the error. */
export function SettingField({
  name,
  info,
  defaultValue,
  error,
  readOnly,
  kind = "number",
  unit,
  options,
  step = "any",
  extra,
}: {
  name: string;
  info: SettingsFieldInfo;
  defaultValue: string;
  error?: string;
  readOnly: boolean;
  kind?: "number" | "text" | "select" | "checkbox";
  unit?: string;
  options?: { value: string; label: string }[];
  step?: string;
  extra?: string;
}) {
  const id = useId();
  const described = [`${id}-help`, error ? `${id}-error` : null].filter(Boolean).join(" ");
  const inputClass = `min-h-11 w-full rounded-lg border-2 bg-card px-3 text-base disabled:bg-paper disabled:text-ink ${error ? "border-alarm-700" : "border-line"}`;
  const shownUnit = unit ?? info.unit;
  return (
    <div className="grid gap-1 border-b border-line py-4 last:border-b-0 sm:grid-cols-[16rem_1fr] sm:gap-4">
      <label htmlFor={id} className="pt-2 font-semibold">
        {info.label}
      </label>
      <div>
        <div className="flex max-w-md items-center gap-2">
          {kind === "checkbox" ? (
            // A confirmation: posted as "on" when ticked, never shown ticked from before.
            <input id={id} name={name} type="checkbox" disabled={readOnly} aria-describedby={described} aria-invalid={error ? true : undefined} className="h-7 w-7 accent-pine-700" />
          ) : kind === "select" ? (
            <select id={id} name={name} defaultValue={defaultValue} disabled={readOnly} aria-describedby={described} aria-invalid={error ? true : undefined} className={inputClass}>
              {options?.map((o) => (
                <option key={o.value} value={o.value}>
                  {o.label}
                </option>
              ))}
            </select>
          ) : (
            <input
              id={id}
              name={name}
              type={kind === "number" ? "number" : "text"}
              inputMode={kind === "number" ? "decimal" : undefined}
              step={kind === "number" ? step : undefined}
              defaultValue={defaultValue}
              disabled={readOnly}
              aria-describedby={described}
              aria-invalid={error ? true : undefined}
              className={inputClass}
            />
          )}
          {shownUnit && kind !== "select" && kind !== "checkbox" ? <span className="shrink-0 font-semibold text-ink-soft">{shownUnit}</span> : null}
        </div>
        {error ? (
          <p id={`${id}-error`} className="mt-1 font-semibold text-alarm-700">
            {error}
          </p>
        ) : null}
        <div id={`${id}-help`} className="mt-1 text-sm text-ink-soft">
          <p>
            {info.explanation}
            {extra ? ` ${extra}` : ""}
          </p>
          {info.source ? <p className="mt-0.5 italic">Source: {info.source}</p> : null}
        </div>
      </div>
    </div>
  );
}
