import { baseMapGeoJson, parseBbox } from "~/models/base-map.server";
import { requireUser } from "~/services/permissions.server";
import type { Route } from "./+types/base-map";

// GET /api/base-map?bbox=west,south,east,north — the offline base map under every map:
// county lines, state lines and names inside the box, as GeoJSON. Any signed-in user.
export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  const parsed = parseBbox(new URL(request.url).searchParams.get("bbox"));
  if (!parsed.ok) return Response.json({ error: parsed.message }, { status: 400 });
  return Response.json(baseMapGeoJson(parsed.bbox), {
    headers: { "Cache-Control": "private, max-age=86400" },
  });
}
