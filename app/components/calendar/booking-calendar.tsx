import { lazy, Suspense, type ComponentProps } from "react";
import { useHydrated } from "../hydrated";

const BookingCalendarClient = lazy(() => import("./booking-calendar.client"));

function Placeholder() {
  return (
    <div className="flex h-[28rem] items-center justify-center rounded-xl border border-line bg-card text-ink-soft">
      Loading the calendar…
    </div>
  );
}

/** The booking calendar, loaded in the browser after hydration (FullCalendar needs `window`). */
export function BookingCalendar(props: ComponentProps<typeof BookingCalendarClient>) {
  const hydrated = useHydrated();
  if (!hydrated) return <Placeholder />;
  return (
    <Suspense fallback={<Placeholder />}>
      <BookingCalendarClient {...props} />
    </Suspense>
  );
}
