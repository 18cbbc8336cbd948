import { data } from "react-router";
import { syncBatchSchema } from "~/forms/sync";
import { applySyncBatch } from "~/models/tallies.server";
import { readJsonBody } from "~/services/api-request.server";
import { db } from "~/services/db.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/crew-sync";

// The crew's phones send the changes kept while offline here, each with its own key, so a
// change sent twice is applied once. The answer says, per change, what became of it.
export async function action({ request }: Route.ActionArgs) {
  const user = await requireRole(request, AREA_ROLES.crew);
  if (request.method !== "POST") return data({ error: "Send the changes with POST." }, { status: 405 });
  // Only the crew screens' own fetch gets through: another site's post is 403, text is 415.
  const body = await readJsonBody(request);
  const parsed = syncBatchSchema.safeParse(body);
  if (!parsed.success) return data({ error: parsed.error.issues[0].message }, { status: 400 });
  const results = await applySyncBatch(db, { crewId: user.crewId ?? 0, userId: user.id, changes: parsed.data.changes });
  // The phone keeps showing these changes until it has a snapshot made after this time.
  return Response.json({ results, serverTime: new Date().toISOString() }, { headers: { "Cache-Control": "no-store" } });
}

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.crew);
  return data({ error: "Send the changes with POST." }, { status: 405, headers: { Allow: "POST" } });
}
