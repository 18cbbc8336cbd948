import { data } from "react-router";
import { runToIcs } from "~/domain/exports/ics";
import { runExportBaseName } from "~/domain/exports/run-export";
import { runExportForUser } from "~/models/run-exports.server";
import { db } from "~/services/db.server";
import { requireUser } from "~/services/permissions.server";
import { idParam } from "~/services/request.server";
import type { Route } from "./+types/run-ics";

// A run as iCalendar events (one per stop): the dispatcher and owner any run, a crew member
// a published run of their own crew; 404 for anyone else.
export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const run = await runExportForUser(db, idParam(params.runId, "run"), user);
  if (!run) throw data("There is no run with that number that you may see.", { status: 404 });
  return new Response(runToIcs(run), {
    headers: {
      "Content-Type": "text/calendar; charset=utf-8",
      "Content-Disposition": `attachment; filename="${runExportBaseName(run)}.ics"`,
      "Cache-Control": "private, no-store",
      "X-Content-Type-Options": "nosniff",
    },
  });
}
