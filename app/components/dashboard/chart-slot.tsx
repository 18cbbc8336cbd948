import { lazy, Suspense } from "react";
import { useHydrated } from "~/components/hydrated";
import type { ChartSpec } from "./chart-spec";

// Recharts measures the page, so the charts load only in the browser after hydration
// (season-charts.client.tsx). On the server and until then a placeholder of the same height
// holds the place; the table beside every chart carries the same numbers from the start.

const SeasonChart = lazy(() => import("./season-charts.client"));

function ChartPlaceholder() {
  return (
    <div className="flex h-full w-full items-center justify-center rounded-lg bg-paper text-sm text-ink-soft">
      Drawing the chart…
      <noscript> The chart needs JavaScript; the table has the same figures.</noscript>
    </div>
  );
}

/** A chart as one image with a name (the table next to it is the readable version). */
export function ChartSlot({ spec, height, label }: { spec: ChartSpec; height: number; label: string }) {
  const hydrated = useHydrated();
  return (
    <div role="img" aria-label={label} className="w-full" style={{ height }}>
      {hydrated ? (
        <Suspense fallback={<ChartPlaceholder />}>
          <SeasonChart spec={spec} height={height} />
        </Suspense>
      ) : (
        <ChartPlaceholder />
      )}
    </div>
  );
}
