import { useMemo, useState } from "react";
import { data, Form, Link, redirect, useNavigation } from "react-router";
import { BookingCalendar } from "~/components/calendar/booking-calendar";
import { formatServiceDate } from "~/components/format";
import { SafetyCautions } from "~/components/safety-cautions";
import { Button } from "~/components/ui/button";
import { Card, PageHeader } from "~/components/ui/card";
import { FormMessage } from "~/components/ui/field";
import { addCalendarDays } from "~/domain/courses";
import { bookingInputFromForm, bookingSchema } from "~/forms/booking";
import { fieldErrors, formValues, type FieldErrors } from "~/forms/field-errors";
import { BOOKING_HORIZON_DAYS, BookingRefused, bookYards } from "~/models/bookings.server";
import { listYardsForCustomer } from "~/models/yards.server";
import { businessToday } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { requireCustomer } from "~/services/permissions.server";
import { readForm } from "~/services/request.server";
import type { Route } from "./+types/book";

export const meta: Route.MetaFunction = () => [{ title: "Book a treatment · Varroute" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireCustomer(request);
  const today = await businessToday(db);
  const yards = await listYardsForCustomer(db, user.customerId, today);
  const preselected = new URL(request.url).searchParams.getAll("yard").map(Number);
  return {
    yards: yards.map((y) => ({ id: y.id, name: y.name, colonies: y.colonyCount, nextVisitDate: y.nextVisitDate })),
    preselected,
    firstBookable: addCalendarDays(today, 1),
    lastBookable: addCalendarDays(today, BOOKING_HORIZON_DAYS),
  };
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireCustomer(request);
  const values = formValues(await readForm(request));
  const parsed = bookingSchema.safeParse(bookingInputFromForm(values));
  if (!parsed.success) return data({ errors: fieldErrors(parsed.error), values }, { status: 400 });
  try {
    const result = await bookYards(db, { ...parsed.data, customerId: user.customerId, userId: user.id });
    throw redirect(`/portal/bookings?booked=${result.serviceDate}`);
  } catch (error) {
    if (error instanceof BookingRefused) {
      return data({ errors: { [error.field]: error.message } as FieldErrors, values }, { status: 409 });
    }
    throw error;
  }
}

const TIMES = [
  { value: "any", label: "Any time", hint: "Easiest to fit in" },
  { value: "morning", label: "Morning", hint: "Before noon" },
  { value: "afternoon", label: "Afternoon", hint: "From noon" },
] as const;

export default function Book({ loaderData, actionData }: Route.ComponentProps) {
  const { yards, firstBookable, lastBookable } = loaderData;
  const busy = useNavigation().state === "submitting";
  const kept = actionData?.values;
  const keptYards = kept ? (Array.isArray(kept.yardIds) ? kept.yardIds : kept.yardIds ? [kept.yardIds] : []).map(Number) : null;
  const [chosen, setChosen] = useState<number[]>(keptYards ?? loaderData.preselected.filter((id) => yards.some((y) => y.id === id && !y.nextVisitDate)));
  const [date, setDate] = useState<string | null>(typeof kept?.serviceDate === "string" && kept.serviceDate ? kept.serviceDate : null);
  const errors = actionData?.errors ?? {};
  const needed = useMemo(() => yards.filter((y) => chosen.includes(y.id)).reduce((s, y) => s + y.colonies, 0), [yards, chosen]);

  if (yards.length === 0) {
    return (
      <>
        <PageHeader title="Book a treatment" />
        <Card>
          <p>Put a yard on the map first; then you can book it.</p>
          <Link to="/portal/yards/new" className="mt-3 inline-flex min-h-11 items-center font-semibold text-pine-800 underline">
            Add a yard
          </Link>
        </Card>
      </>
    );
  }

  return (
    <>
      <PageHeader title="Book a treatment" subtitle="Choose your yards, then a day that still has room for their colonies." />
      <div className="grid gap-6 lg:grid-cols-3">
        <Form method="post" noValidate className="flex min-w-0 flex-col gap-6 lg:col-span-2">
          <FormMessage message={errors.form} />
          <Card title="1. Yards to treat">
            <fieldset aria-describedby={errors.yardIds ? "yards-error" : undefined}>
              <legend className="sr-only">Yards to treat</legend>
              <ul className="flex flex-col gap-2">
                {yards.map((yard) => {
                  const booked = Boolean(yard.nextVisitDate);
                  return (
                    <li key={yard.id}>
                      <label className={`flex min-h-11 items-center gap-3 rounded-lg border-2 px-3 py-2 ${booked ? "border-line bg-paper text-ink-soft" : "border-line bg-card"}`}>
                        <input
                          type="checkbox"
                          name="yardIds"
                          value={yard.id}
                          className="h-6 w-6 accent-pine-700"
                          disabled={booked}
                          checked={chosen.includes(yard.id)}
                          onChange={(e) => setChosen((c) => (e.target.checked ? [...c, yard.id] : c.filter((id) => id !== yard.id)))}
                        />
                        <span className="flex-1">
                          <span className="font-semibold">{yard.name}</span> · {yard.colonies} colonies
                          {booked ? <span className="block text-sm">Already booked for {formatServiceDate(yard.nextVisitDate!)}</span> : null}
                        </span>
                      </label>
                    </li>
                  );
                })}
              </ul>
              {errors.yardIds ? (
                <p id="yards-error" className="mt-2 font-semibold text-alarm-700">
                  {errors.yardIds}
                </p>
              ) : null}
            </fieldset>
          </Card>
          <Card title="2. Day">
            <p className="mb-3 text-ink-soft">
              {needed > 0 ? `Your chosen yards have ${needed} colonies; days without room for them cannot be picked.` : "Choose yards first to see which days have room."}
            </p>
            <BookingCalendar firstBookable={firstBookable} lastBookable={lastBookable} selected={date} needed={needed} onSelect={setDate} />
            <div className="mt-3 flex max-w-xs flex-col gap-1">
              <label htmlFor="serviceDate" className="font-semibold">
                Chosen day
              </label>
              <input
                id="serviceDate"
                name="serviceDate"
                type="date"
                min={firstBookable}
                max={lastBookable}
                value={date ?? ""}
                onChange={(e) => setDate(e.target.value || null)}
                aria-invalid={errors.serviceDate ? true : undefined}
                aria-describedby={errors.serviceDate ? "date-error" : undefined}
                className={`min-h-11 rounded-lg border-2 bg-card px-3 ${errors.serviceDate ? "border-alarm-700" : "border-line"}`}
              />
              {errors.serviceDate ? (
                <p id="date-error" className="font-semibold text-alarm-700">
                  {errors.serviceDate}
                </p>
              ) : null}
            </div>
          </Card>
          <Card title="3. Time of day">
            <fieldset>
              <legend className="sr-only">Time of day</legend>
              <div className="grid gap-2 sm:grid-cols-3">
                {TIMES.map((t) => (
                  <label key={t.value} className="flex min-h-11 items-center gap-3 rounded-lg border-2 border-line bg-card px-3 py-2">
                    <input type="radio" name="timePreference" value={t.value} defaultChecked={(kept?.timePreference ?? "any") === t.value} className="h-5 w-5 accent-pine-700" />
                    <span>
                      <span className="block font-semibold">{t.label}</span>
                      <span className="block text-sm text-ink-soft">{t.hint}</span>
                    </span>
                  </label>
                ))}
              </div>
            </fieldset>
            <div className="mt-4 flex flex-col gap-1">
              <label htmlFor="notes" className="font-semibold">
                Note for the crew (optional)
              </label>
              <textarea id="notes" name="notes" rows={3} maxLength={1000} defaultValue={typeof kept?.notes === "string" ? kept.notes : ""} className="rounded-lg border-2 border-line bg-card p-3" />
              {errors.notes ? <p className="font-semibold text-alarm-700">{errors.notes}</p> : null}
            </div>
          </Card>
          <div className="flex flex-wrap items-center gap-3">
            <Button type="submit" disabled={busy}>
              {busy ? "Booking…" : date ? `Book ${formatServiceDate(date)}` : "Book"}
            </Button>
            <span className="text-ink-soft">You will get a confirmation by e-mail.</span>
          </div>
        </Form>
        <SafetyCautions audience="customer" />
      </div>
    </>
  );
}
