import { lazy, Suspense, type ComponentProps } from "react";
import { useHydrated } from "../hydrated";

const VisitCalendarClient = lazy(() => import("./visit-calendar.client"));

function Placeholder() {
  return <div className="flex h-[40rem] items-center justify-center rounded-xl border border-line bg-card text-ink-soft">Loading the calendar…</div>;
}

/** The dispatcher's visit calendar, loaded in the browser after hydration. */
export function VisitCalendar(props: ComponentProps<typeof VisitCalendarClient>) {
  const hydrated = useHydrated();
  if (!hydrated) return <Placeholder />;
  return (
    <Suspense fallback={<Placeholder />}>
      <VisitCalendarClient {...props} />
    </Suspense>
  );
}
