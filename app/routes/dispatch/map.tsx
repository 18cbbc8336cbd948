import { Link } from "react-router";
import { formatServiceDate } from "~/components/format";
import { MapLegend, MarkerSwatch, YardMap, type YardMapMarker } from "~/components/map/yard-map";
import { PageHeader } from "~/components/ui/card";
import { countYardsByMapGroup, isYardMapGroup, yardsWithBookingState, type YardMapGroup, type YardOnMap } from "~/models/yard-map.server";
import { businessToday } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { mapConfig } from "~/services/env.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/map";

export const meta: Route.MetaFunction = () => [{ title: "Yards on the map · Varroute" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.dispatch);
  const stateParam = new URL(request.url).searchParams.get("state");
  // ?state= takes the map's group keys (old links' "booked", "in-course" and "never" included).
  const filter = isYardMapGroup(stateParam) ? stateParam : null;
  const today = await businessToday(db);
  const yards = await yardsWithBookingState(db, today);
  return {
    today,
    filter,
    total: yards.length,
    counts: countYardsByMapGroup(yards),
    yards: filter ? yards.filter((y) => y.group === filter) : yards,
    map: mapConfig(),
  };
}

// In legend order (the component cannot import the server module's list).
const GROUPS: YardMapGroup[] = ["booked", "requested", "in-course", "never"];

const GROUP_NAMES: Record<YardMapGroup, string> = {
  booked: "Booked",
  requested: "Requested",
  "in-course": "Next round not booked",
  never: "Nothing booked",
};

const GROUP_EXPLAINED: Record<YardMapGroup, string> = {
  booked: "a visit is scheduled from today on",
  requested: "the customer asked for a visit from today on and the office has not confirmed it yet",
  "in-course": "a course is under way and its next round has no visit booked",
  never: "nothing booked or requested from today on and no course under way (booked before, or never)",
};

/** The line under a yard's name in the list: its group, and the day that goes with it. */
function yardStateLine(yard: Pick<YardOnMap, "group" | "state" | "nextVisitDate" | "requestedDate">): string {
  if (yard.nextVisitDate) return `${GROUP_NAMES[yard.group]} · ${formatServiceDate(yard.nextVisitDate, false)}`;
  if (yard.requestedDate) return `${GROUP_NAMES[yard.group]} for ${formatServiceDate(yard.requestedDate, false)}`;
  return yard.state === "never_booked" ? "Never booked" : GROUP_NAMES[yard.group];
}

const colonies = (n: number) => `${n} ${n === 1 ? "colony" : "colonies"}`;

export default function DispatchMap({ loaderData }: Route.ComponentProps) {
  const { yards, counts, total, filter, map } = loaderData;
  const markers: YardMapMarker[] = yards.map((yard) => ({
    id: yard.id,
    lat: yard.lat,
    lng: yard.lng,
    title: `${yard.name} (${GROUP_NAMES[yard.group].toLowerCase()})`,
    tone: yard.group,
    href: `/dispatch/yards/${yard.id}`,
    popup: `${yard.customerName} · ${colonies(yard.colonies)}${
      yard.nextVisitDate
        ? ` · next visit ${formatServiceDate(yard.nextVisitDate, false)}`
        : yard.requestedDate
          ? ` · requested for ${formatServiceDate(yard.requestedDate, false)}`
          : ""
    }`,
  }));
  const shown = filter ? `${GROUP_NAMES[filter].toLowerCase()} yards` : "yards";
  const filterLink = (state: YardMapGroup | null, label: string, count: number) => {
    const active = state === filter;
    return (
      <li key={state ?? "all"}>
        <Link
          to={state ? `?state=${state}` : "."}
          aria-current={active ? "page" : undefined}
          preventScrollReset
          className={`flex min-h-11 items-center gap-2 rounded-lg border-2 px-3 font-semibold ${active ? "border-pine-700 bg-pine-700 text-white" : "border-line bg-card text-ink hover:border-pine-600"}`}
        >
          {state ? <MarkerSwatch tone={state} height={22} /> : null}
          <span>{label}</span>{" "}
          <span className={`tabular-nums ${active ? "text-pine-100" : "text-ink-soft"}`}>{count}</span>
        </Link>
      </li>
    );
  };

  return (
    <>
      <PageHeader title="Yards on the map" subtitle={`Every active yard, coloured by whether its next treatment is booked. ${total} yards in all.`} />
      <nav aria-label="Show yards by booking state" className="mb-4">
        <ul className="flex flex-wrap gap-2">
          {filterLink(null, "All yards", total)}
          {GROUPS.map((group) => filterLink(group, GROUP_NAMES[group], counts[group]))}
        </ul>
      </nav>
      <div className="grid gap-6 lg:grid-cols-[minmax(0,1fr)_22rem]">
        <YardMap
          markers={markers}
          height="clamp(20rem, 62vh, 40rem)"
          tileUrl={map.tileUrl}
          tileAttribution={map.attribution}
          label={`Map of ${yards.length} ${shown}`}
          description="The same yards are listed with the map, with links to each yard."
          legend={
            <MapLegend
              items={GROUPS.map((group) => ({ tone: group, label: GROUP_NAMES[group], count: counts[group] }))}
            />
          }
        />
        <section aria-labelledby="yards-shown-title" className="min-w-0">
          <h2 id="yards-shown-title" className="mb-2 text-lg font-bold">
            Yards shown ({yards.length})
          </h2>
          {filter ? <p className="mb-2 text-sm text-ink-soft">{`${GROUP_NAMES[filter]}: ${GROUP_EXPLAINED[filter]}.`}</p> : null}
          {yards.length === 0 ? (
            <p className="rounded-xl border border-line bg-card p-4 text-ink-soft">No yards are in this state.</p>
          ) : (
            <ul
              aria-labelledby="yards-shown-title"
              className="divide-y divide-line overflow-hidden rounded-xl border border-line bg-card lg:max-h-[40rem] lg:overflow-y-auto"
              data-testid="map-yard-list"
            >
              {yards.map((yard) => (
                <li key={yard.id} className="flex items-start gap-3 px-3 py-2">
                  <MarkerSwatch tone={yard.group} height={24} className="mt-0.5" />
                  <div className="min-w-0">
                    <Link to={`/dispatch/yards/${yard.id}`} className="font-semibold text-pine-800 underline underline-offset-2">
                      {yard.name}
                    </Link>
                    <p className="text-sm text-ink-soft">
                      {yard.customerName} · {colonies(yard.colonies)}
                    </p>
                    <p className="text-sm">{yardStateLine(yard)}</p>
                  </div>
                </li>
              ))}
            </ul>
          )}
        </section>
      </div>
    </>
  );
}
