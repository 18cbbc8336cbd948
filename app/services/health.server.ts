import type { Knex } from "knex";
import { databaseIsUp } from "./db.server";

/** The health check's answer: 200 when the database answers, 503 when it does not. */
export async function healthResponse(database?: Knex): Promise<Response> {
  const state = await databaseIsUp(database);
  return Response.json(
    { status: state.ok ? "ok" : "unavailable", database: state.ok ? "up" : "down" },
    { status: state.ok ? 200 : 503, headers: { "Cache-Control": "no-store" } },
  );
}
