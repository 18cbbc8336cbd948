import { baseMapGeoJson, parseBbox } from "~/models/base-map.server";
import { businessSetUpRemembered } from "~/models/setup.server";
import { db } from "~/services/db.server";
import { requireUser } from "~/services/permissions.server";
import type { Route } from "./+types/base-map";

// GET /api/base-map?bbox=west,south,east,north — the offline base map under every map:
// county lines, state lines and names inside the box, as GeoJSON. Any signed-in user, and
// anyone while the business is not set up yet (the setup page's depot map; public data).
export async function loader({ request }: Route.LoaderArgs) {
  if (await businessSetUpRemembered(db)) await requireUser(request);
  const parsed = parseBbox(new URL(request.url).searchParams.get("bbox"));
  if (!parsed.ok) return Response.json({ error: parsed.message }, { status: 400 });
  return Response.json(baseMapGeoJson(parsed.bbox), {
    headers: { "Cache-Control": "private, max-age=86400" },
  });
}
