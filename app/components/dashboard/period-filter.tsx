import { Form, Link } from "react-router";
import { buttonClass } from "~/components/ui/button";
import { Field } from "~/components/ui/field";
import { longDay } from "./format";
import type { PeriodFieldErrors, PeriodPreset, PeriodPresetKey } from "~/domain/season-figures";

// The period of the dashboard: quick choices as links, or any first and last day through a
// GET form (the figures' address can be bookmarked and shared). Messages sit at their fields.

export function PeriodFilter({
  presets,
  active,
  input,
  errors,
  today,
}: {
  presets: PeriodPreset[];
  active: PeriodPresetKey | null;
  input: { from: string; to: string };
  errors: PeriodFieldErrors | null;
  today: string;
}) {
  return (
    <section aria-labelledby="period-heading" className="mb-6 rounded-xl border border-line bg-card p-4 sm:p-5">
      <h2 id="period-heading" className="mb-3 text-lg font-bold">
        Period
      </h2>
      <nav aria-label="Quick choices of period" className="mb-4">
        <ul className="flex flex-wrap gap-2">
          {presets.map((p) => (
            <li key={p.key}>
              <Link
                to={`?from=${p.from}&to=${p.to}`}
                aria-current={active === p.key ? "true" : undefined}
                className={buttonClass(active === p.key ? "primary" : "secondary", "min-h-11 px-4")}
              >
                {p.label}
              </Link>
            </li>
          ))}
        </ul>
      </nav>
      <Form method="get" className="flex flex-wrap items-start gap-3" key={`${input.from}|${input.to}`}>
        <Field
          label="First day"
          name="from"
          type="date"
          defaultValue={input.from}
          error={errors?.from}
          hint="Left empty: 1 January of the last day's year"
          className="w-full sm:w-56"
        />
        <Field
          label="Last day"
          name="to"
          type="date"
          defaultValue={input.to}
          error={errors?.to}
          hint={`Left empty: today, ${longDay(today)}`}
          className="w-full sm:w-56"
        />
        <div className="flex w-full items-end sm:w-auto sm:self-stretch">
          <button type="submit" className={buttonClass("primary", "w-full sm:w-auto")}>
            Show figures
          </button>
        </div>
      </Form>
    </section>
  );
}
