import { databaseIsUp } from "~/services/db.server";

// Public health check for load balancers and the start script: 200 when the database
// answers, 503 when it does not. It reveals nothing but that state.
export async function loader() {
  const database = await databaseIsUp();
  return Response.json(
    { status: database.ok ? "ok" : "unavailable", database: database.ok ? "up" : "down" },
    { status: database.ok ? 200 : 503, headers: { "Cache-Control": "no-store" } },
  );
}
