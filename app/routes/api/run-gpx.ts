import { data } from "react-router";
import { runToGpx } from "~/domain/exports/gpx";
import { runExportBaseName } from "~/domain/exports/run-export";
import { runExportForUser } from "~/models/run-exports.server";
import { db } from "~/services/db.server";
import { requireUser } from "~/services/permissions.server";
import { idParam } from "~/services/request.server";
import type { Route } from "./+types/run-gpx";

// A run as GPX 1.1 for navigation devices: the dispatcher and owner any run, a crew member
// a published run of their own crew; 404 for anyone else.
export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const run = await runExportForUser(db, idParam(params.runId, "run"), user);
  if (!run) throw data("There is no run with that number that you may see.", { status: 404 });
  return new Response(runToGpx(run), {
    headers: {
      "Content-Type": "application/gpx+xml; charset=utf-8",
      "Content-Disposition": `attachment; filename="${runExportBaseName(run)}.gpx"`,
      "Cache-Control": "private, no-store",
      "X-Content-Type-Options": "nosniff",
    },
  });
}
