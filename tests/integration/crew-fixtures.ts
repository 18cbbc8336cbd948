import type { Knex } from "knex";
import { defaultBusinessSettings } from "~/domain/settings";

// Builders for the crew's day in tests: crews with members, and visits that are stops on a
// crew's run, with their customer, yard, colonies, booking and course.

let seq = 0;
function next(): number {
  seq++;
  return seq;
}

export type TestCrew = { id: number; members: { id: number; name: string }[] };

export async function aCrew(db: Knex, name = `Crew ${next()}`, licence: string | null = "NY-C-12345"): Promise<TestCrew> {
  const [crew] = await db("crews")
    .insert({ name, start_label: `${name} shop`, start_lat: 42.44, start_lng: -76.5, work_start: "08:00", work_end: "17:00", vaporizers: 2 })
    .returning("id");
  const members: { id: number; name: string }[] = [];
  for (const n of [1, 2]) {
    const memberName = `${name} applicator ${n}`;
    const [user] = await db("users")
      .insert({
        email: `crew${next()}.${Math.random().toString(36).slice(2, 8)}@example.test`,
        password_hash: "x",
        role: "crew",
        name: memberName,
        applicator_licence: n === 1 ? licence : null,
      })
      .returning("id");
    members.push({ id: Number(user.id), name: memberName });
  }
  await db("crew_members").insert(members.map((m) => ({ crew_id: crew.id, user_id: m.id })));
  return { id: Number(crew.id), members };
}

export type TestStop = {
  visitId: number;
  runId: number;
  yardId: number;
  courseId: number;
  bookingId: number;
  customerId: number;
  customerEmail: string;
  labels: string[];
};

/**
 * A visit on the crew's run for `date` (the run is made, or reused, with `runStatus`):
 * a customer, a yard with `colonies` colonies H1…Hn of `broodBoxes` brood boxes, a booking,
 * a course of `rounds` rounds `intervalDays` apart, and the visit of round `roundNumber`.
 */
export async function aStop(
  db: Knex,
  crew: TestCrew,
  input: {
    date: string;
    colonies?: number;
    broodBoxes?: number | ((i: number) => number);
    rounds?: number;
    intervalDays?: number;
    roundNumber?: number;
    runStatus?: "draft" | "published" | "in_progress" | "done";
    safetyChecked?: boolean;
  },
): Promise<TestStop> {
  const n = next();
  const colonies = input.colonies ?? 4;
  const rounds = input.rounds ?? 3;
  const email = `customer${n}.${Math.random().toString(36).slice(2, 8)}@example.test`;
  const [customer] = await db("customers")
    .insert({ name: `Customer ${n}`, email, address_line: `${n} Orchard Road`, city: "Ithaca", region: "NY", postal_code: "14850" })
    .returning("id");
  const [yard] = await db("yards")
    .insert({
      customer_id: customer.id,
      name: `Yard ${n}`,
      lat: 42.4 + n * 0.001,
      lng: -76.4,
      address: `${n} Orchard Road, Ithaca`,
      access_notes: "Gate code 1234",
      colony_count: colonies,
      brood_status: rounds > 1 ? "brood" : "broodless",
    })
    .returning("id");
  const labels = Array.from({ length: colonies }, (_, i) => `H${i + 1}`);
  if (colonies > 0) {
    await db("colonies").insert(
      labels.map((label, i) => ({
        yard_id: yard.id,
        label,
        brood_boxes: typeof input.broodBoxes === "function" ? input.broodBoxes(i) : (input.broodBoxes ?? 1),
        brood_status: rounds > 1 ? "brood" : "broodless",
      })),
    );
  }
  const [booking] = await db("bookings").insert({ customer_id: customer.id, yard_id: yard.id, service_date: input.date, colonies, status: "confirmed" }).returning("id");
  const [course] = await db("courses")
    .insert({
      yard_id: yard.id,
      booking_id: booking.id,
      brood_status: rounds > 1 ? "brood" : "broodless",
      rounds_planned: rounds,
      interval_days: input.intervalDays ?? (rounds > 1 ? defaultBusinessSettings.roundIntervalDays : 0),
    })
    .returning("id");
  const [visit] = await db("visits")
    .insert({ course_id: course.id, yard_id: yard.id, round_number: input.roundNumber ?? 1, service_date: input.date, colonies_expected: colonies })
    .returning("id");

  const runStatus = input.runStatus ?? "published";
  let run = await db("runs").where({ crew_id: crew.id, service_date: input.date }).first("id");
  if (!run) {
    [run] = await db("runs")
      .insert({
        crew_id: crew.id,
        service_date: input.date,
        status: runStatus,
        published_at: runStatus === "draft" ? null : new Date(),
        safety_checked_at: input.safetyChecked ? new Date() : null,
      })
      .returning("id");
  }
  const position = Number(((await db("stops").where({ run_id: run!.id }).first(db.raw("count(*)::int as n"))) as unknown as { n: number }).n);
  const at = new Date(`${input.date}T14:00:00Z`);
  await db("stops").insert({ run_id: run!.id, visit_id: visit.id, position, arrive_at: at, start_at: at, leave_at: new Date(at.getTime() + 30 * 60_000) });
  return {
    visitId: Number(visit.id),
    runId: Number(run!.id),
    yardId: Number(yard.id),
    courseId: Number(course.id),
    bookingId: Number(booking.id),
    customerId: Number(customer.id),
    customerEmail: email,
    labels,
  };
}

let keySeq = 0;
/** A fresh idempotency key, as a phone makes them. */
export function aKey(kind = "change"): string {
  keySeq++;
  return `${kind}-${keySeq}-${Math.random().toString(36).slice(2, 12)}`;
}

export const ALL_SAFE = { respirator: true, eyeProtection: true, gloves: true, vaporizerReady: true };

/** Counts of the rows a change could create, to compare before and after a replay. */
export async function rowCounts(db: Knex): Promise<Record<string, number>> {
  const tables = ["tallies", "visits", "invoices", "invoice_lines", "email_log", "applied_changes", "audit_log"] as const;
  const out: Record<string, number> = {};
  for (const table of tables) {
    const row = (await db(table).first(db.raw("count(*)::int as n"))) as unknown as { n: number };
    out[table] = row.n;
  }
  return out;
}
