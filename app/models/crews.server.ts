import type { Knex } from "knex";
import { crewColonyLimit, crewDayCapacityColonies, leastColonyDoseGrams, weekdaysLabel } from "~/domain/capacity";
import { addCalendarDays } from "~/domain/courses";
import { parseClockTime } from "~/domain/units";
import type { CrewFormValues, CrewInput } from "~/forms/crew";
import { dateInZone } from "~/services/clock.server";
import { roomBetween, withTypicalLoads, type CapacityBusinessSettings } from "./capacity.server";
import { loadBusinessSettings } from "./settings.server";
import type { CrewRow } from "./tables";

// Crews: who is on each, where it starts and ends, its hours, kit, daily limits and working
// weekdays, and whether it works at all. The booking capacity (capacity.server.ts) and the
// day planner (day-plan.server.ts) read these values for every date.
//
// Membership rule: a person belongs to at most one active crew, so a run's e-mail and the
// crew's phone screens go to one crew only. It is checked whenever a crew is saved active,
// with the members' user rows locked (in id order) for the transaction, so two crews saved at
// once cannot both take the same person. An inactive crew may keep its members.

/** A save refused, with the form field the reason belongs to. */
export class CrewRefused extends Error {
  constructor(
    message: string,
    readonly field: "name" | "memberIds" | "active" | "form",
  ) {
    super(message);
    this.name = "CrewRefused";
  }
}

export type CrewMember = { userId: number; name: string; email: string };

export type CrewSummary = {
  id: number;
  name: string;
  active: boolean;
  members: CrewMember[];
  startLabel: string;
  endLabel: string;
  workStart: string;
  workEnd: string;
  vaporizers: number;
  workingWeekdays: number[];
  /** "Mon–Fri". */
  weekdays: string;
  maxColoniesPerDay: number | null;
  maxDoseGramsPerDay: number | null;
  /** Colonies the booking capacity counts for the crew on a day it works (the estimate within its limits). */
  estimatedColoniesPerDay: number;
  /** The most colonies its own limits allow (null: no limit). */
  limitColoniesPerDay: number | null;
};

const hhmm = (time: string) => String(time).slice(0, 5);

function summaryOf(row: CrewRow, members: CrewMember[], settings: CapacityBusinessSettings): CrewSummary {
  const workMinutes = parseClockTime(hhmm(row.work_end)) - parseClockTime(hhmm(row.work_start));
  const maxDose = row.max_dose_grams_per_day == null ? null : Number(row.max_dose_grams_per_day);
  const crew = { workMinutes, vaporizers: row.vaporizers, maxColoniesPerDay: row.max_colonies_per_day, maxDoseGramsPerDay: maxDose };
  const limit = crewColonyLimit(crew, leastColonyDoseGrams(settings));
  const weekdays = (row.working_weekdays ?? []).map(Number);
  return {
    id: Number(row.id),
    name: row.name,
    active: row.active,
    members,
    startLabel: row.start_label,
    endLabel: row.end_lat != null && row.end_lng != null ? (row.end_label ?? row.start_label) : row.start_label,
    workStart: hhmm(row.work_start),
    workEnd: hhmm(row.work_end),
    vaporizers: row.vaporizers,
    workingWeekdays: weekdays,
    weekdays: weekdaysLabel(weekdays),
    maxColoniesPerDay: row.max_colonies_per_day,
    maxDoseGramsPerDay: maxDose,
    estimatedColoniesPerDay: crewDayCapacityColonies(crew, settings),
    limitColoniesPerDay: Number.isFinite(limit) ? limit : null,
  };
}

async function membersByCrew(db: Knex, crewIds: number[]): Promise<Map<number, CrewMember[]>> {
  const rows = (await db("crew_members")
    .join("users", "users.id", "crew_members.user_id")
    .whereIn("crew_members.crew_id", crewIds)
    .orderBy("users.name")
    .select("crew_members.crew_id", "users.id", "users.name", "users.email")) as { crew_id: number; id: number; name: string; email: string }[];
  const out = new Map<number, CrewMember[]>();
  for (const row of rows) {
    const list = out.get(Number(row.crew_id)) ?? [];
    list.push({ userId: Number(row.id), name: row.name, email: row.email });
    out.set(Number(row.crew_id), list);
  }
  return out;
}

/** What the crews' colonies-a-day estimate assumes: a typical yard's colonies, a typical colony's vaporizer loads, the drive between yards. */
export type CrewEstimateBasis = { typicalColoniesPerYard: number; loadsPerTypicalColony: number; averageDriveMinutesBetweenYards: number };

export async function crewEstimateBasis(db: Knex): Promise<CrewEstimateBasis> {
  const settings = await withTypicalLoads(db, await loadBusinessSettings(db));
  return {
    typicalColoniesPerYard: settings.typicalColoniesPerYard,
    loadsPerTypicalColony: settings.loadsPerTypicalColony,
    averageDriveMinutesBetweenYards: settings.averageDriveMinutesBetweenYards,
  };
}

/** Every crew, active first, then by name, with its figures. */
export async function listCrews(db: Knex): Promise<CrewSummary[]> {
  const settings = await withTypicalLoads(db, await loadBusinessSettings(db));
  const rows = await db("crews").orderBy([{ column: "active", order: "desc" }, { column: "name" }]).select("*");
  const members = await membersByCrew(db, rows.map((r) => Number(r.id)));
  return rows.map((row) => summaryOf(row, members.get(Number(row.id)) ?? [], settings));
}

/** One crew with its figures, or null. */
export async function getCrew(db: Knex, crewId: number): Promise<CrewSummary | null> {
  const row = await db("crews").where({ id: crewId }).first();
  if (!row) return null;
  const settings = await withTypicalLoads(db, await loadBusinessSettings(db));
  const members = await membersByCrew(db, [crewId]);
  return summaryOf(row, members.get(crewId) ?? [], settings);
}

/** A saved crew written out as the form's fields. */
export async function crewFormValues(db: Knex, crewId: number): Promise<CrewFormValues | null> {
  const row = await db("crews").where({ id: crewId }).first();
  if (!row) return null;
  const members = await db("crew_members").where({ crew_id: crewId }).orderBy("user_id").pluck("user_id");
  const text = (v: number | null) => (v == null ? "" : String(Number(v)));
  return {
    name: row.name,
    memberIds: members.map((id) => String(id)),
    startLabel: row.start_label,
    startLat: text(row.start_lat),
    startLng: text(row.start_lng),
    endLabel: row.end_label ?? "",
    endLat: text(row.end_lat),
    endLng: text(row.end_lng),
    workStart: hhmm(row.work_start),
    workEnd: hhmm(row.work_end),
    vaporizers: String(row.vaporizers),
    maxColoniesPerDay: text(row.max_colonies_per_day),
    maxDoseGramsPerDay: text(row.max_dose_grams_per_day),
    workingWeekdays: (row.working_weekdays ?? []).map((d) => String(d)),
    active: row.active ? "on" : "",
  };
}

export type MemberChoice = { userId: number; name: string; email: string; disabled: boolean; otherActiveCrew: string | null };

/**
 * People with the crew role, for the members checkboxes: each with the other active crew they
 * are on (if any), so the form can say why one cannot be added. Disabled accounts are listed
 * only when already on this crew (to be taken off).
 */
export async function crewMemberChoices(db: Knex, crewId: number | null): Promise<MemberChoice[]> {
  const users = await db("users").where({ role: "crew" }).orderBy("name").select("id", "name", "email", "disabled_at");
  const onThis = new Set(crewId === null ? [] : (await db("crew_members").where({ crew_id: crewId }).pluck("user_id")).map(Number));
  const others = (await db("crew_members")
    .join("crews", "crews.id", "crew_members.crew_id")
    .where("crews.active", true)
    .modify((q) => {
      if (crewId !== null) q.whereNot("crews.id", crewId);
    })
    .select("crew_members.user_id", "crews.name")) as { user_id: number; name: string }[];
  const otherOf = new Map(others.map((o) => [Number(o.user_id), o.name]));
  return users
    .filter((u) => u.disabled_at === null || onThis.has(Number(u.id)))
    .map((u) => ({ userId: Number(u.id), name: u.name, email: u.email, disabled: u.disabled_at !== null, otherActiveCrew: otherOf.get(Number(u.id)) ?? null }));
}

function crewColumns(input: CrewInput) {
  const hasEnd = input.endLat !== null && input.endLng !== null;
  return {
    name: input.name,
    start_label: input.startLabel,
    start_lat: input.startLat,
    start_lng: input.startLng,
    end_label: hasEnd ? (input.endLabel ?? input.startLabel) : null,
    end_lat: hasEnd ? input.endLat : null,
    end_lng: hasEnd ? input.endLng : null,
    work_start: input.workStart,
    work_end: input.workEnd,
    vaporizers: input.vaporizers,
    max_colonies_per_day: input.maxColoniesPerDay,
    max_dose_grams_per_day: input.maxDoseGramsPerDay,
    working_weekdays: [...new Set(input.workingWeekdays)].sort((a, b) => a - b),
    active: input.active,
  };
}

/** What the audit entry keeps of a crew (the same names as the form). */
function auditValues(columns: ReturnType<typeof crewColumns>, memberIds: number[]) {
  return {
    name: columns.name,
    memberIds: [...memberIds].sort((a, b) => a - b),
    startLabel: columns.start_label,
    start: { lat: Number(columns.start_lat), lng: Number(columns.start_lng) },
    endLabel: columns.end_label,
    end: columns.end_lat == null || columns.end_lng == null ? null : { lat: Number(columns.end_lat), lng: Number(columns.end_lng) },
    workStart: hhmm(columns.work_start),
    workEnd: hhmm(columns.work_end),
    vaporizers: columns.vaporizers,
    maxColoniesPerDay: columns.max_colonies_per_day == null ? null : Number(columns.max_colonies_per_day),
    maxDoseGramsPerDay: columns.max_dose_grams_per_day == null ? null : Number(columns.max_dose_grams_per_day),
    workingWeekdays: (columns.working_weekdays ?? []).map(Number),
    active: columns.active,
  };
}

/** Checks the name and the members under lock; throws CrewRefused at the field concerned. */
async function checkCrew(trx: Knex.Transaction, crewId: number | null, input: CrewInput): Promise<void> {
  const sameName = await trx("crews")
    .whereRaw("lower(name) = lower(?)", [input.name])
    .modify((q) => {
      if (crewId !== null) q.whereNot("id", crewId);
    })
    .first("id");
  if (sameName) throw new CrewRefused(`There is already a crew called “${input.name}”. Choose another name.`, "name");

  const memberIds = [...new Set(input.memberIds)].sort((a, b) => a - b);
  if (memberIds.length === 0) return;
  // Locked in id order, so two saves taking the same people queue up instead of deadlocking.
  const users = await trx("users").whereIn("id", memberIds).orderBy("id").forUpdate().select("id", "name", "role", "disabled_at");
  const current = new Set(crewId === null ? [] : (await trx("crew_members").where({ crew_id: crewId }).pluck("user_id")).map(Number));
  if (users.length !== memberIds.length) throw new CrewRefused("Choose crew members from the list.", "memberIds");
  const notCrew = users.find((u) => u.role !== "crew");
  if (notCrew) throw new CrewRefused(`${notCrew.name} does not have the crew role; only crew accounts can be on a crew.`, "memberIds");
  const disabled = users.find((u) => u.disabled_at !== null && !current.has(Number(u.id)));
  if (disabled) throw new CrewRefused(`${disabled.name}'s account is disabled; it cannot join a crew.`, "memberIds");
  if (!input.active) return;
  const elsewhere = (await trx("crew_members")
    .join("crews", "crews.id", "crew_members.crew_id")
    .join("users", "users.id", "crew_members.user_id")
    .whereIn("crew_members.user_id", memberIds)
    .where("crews.active", true)
    .modify((q) => {
      if (crewId !== null) q.whereNot("crews.id", crewId);
    })
    .orderBy("users.name")
    .select("users.name as user_name", "crews.name as crew_name")) as { user_name: string; crew_name: string }[];
  if (elsewhere.length > 0) {
    const who = elsewhere.map((e) => `${e.user_name} (on ${e.crew_name})`).join(", ");
    throw new CrewRefused(
      `A person can be on one active crew only: ${who}. Take ${elsewhere.length === 1 ? "that person" : "them"} off the other crew first, or save this crew as inactive.`,
      "memberIds",
    );
  }
}

function isNameTaken(error: unknown): boolean {
  const pg = error as { code?: string; constraint?: string };
  return typeof pg === "object" && pg !== null && pg.code === "23505" && pg.constraint === "crews_name_unique";
}

/** Adds a crew with its members; returns its id. */
export async function createCrew(db: Knex, input: CrewInput, actorUserId: number | string): Promise<number> {
  try {
    return await db.transaction(async (trx) => {
      await checkCrew(trx, null, input);
      const columns = crewColumns(input);
      const [row] = await trx("crews").insert(columns).returning("id");
      const crewId = Number(row.id);
      const memberIds = [...new Set(input.memberIds)];
      if (memberIds.length > 0) await trx("crew_members").insert(memberIds.map((userId) => ({ crew_id: crewId, user_id: userId })));
      await trx("audit_log").insert({
        actor_user_id: Number(actorUserId),
        action: "crew.create",
        entity_type: "crew",
        entity_id: String(crewId),
        after: JSON.stringify(auditValues(columns, memberIds)),
      });
      return crewId;
    });
  } catch (error) {
    if (isNameTaken(error)) throw new CrewRefused(`There is already a crew called “${input.name}”. Choose another name.`, "name");
    throw error;
  }
}

/** A day ahead on which more colonies are booked than the crews now working it can take. */
export type OverbookedDay = { date: string; booked: number; capacity: number };

/** Saves a crew's changes (members replaced); false when there is no such crew. */
export async function updateCrew(db: Knex, crewId: number, input: CrewInput, actorUserId: number | string): Promise<boolean> {
  try {
    return await db.transaction(async (trx) => {
      const before = await trx("crews").where({ id: crewId }).forUpdate().first();
      if (!before) return false;
      await checkCrew(trx, crewId, input);
      const beforeMembers = (await trx("crew_members").where({ crew_id: crewId }).pluck("user_id")).map(Number);
      const columns = crewColumns(input);
      await trx("crews")
        .where({ id: crewId })
        .update({ ...columns, updated_at: trx.fn.now() as unknown as Date });
      const memberIds = [...new Set(input.memberIds)];
      await trx("crew_members").where({ crew_id: crewId }).whereNotIn("user_id", memberIds).delete();
      if (memberIds.length > 0) {
        await trx("crew_members")
          .insert(memberIds.map((userId) => ({ crew_id: crewId, user_id: userId })))
          .onConflict(["crew_id", "user_id"])
          .ignore();
      }
      await trx("audit_log").insert({
        actor_user_id: Number(actorUserId),
        action: "crew.update",
        entity_type: "crew",
        entity_id: String(crewId),
        before: JSON.stringify(
          auditValues(
            {
              name: before.name,
              start_label: before.start_label,
              start_lat: before.start_lat,
              start_lng: before.start_lng,
              end_label: before.end_label,
              end_lat: before.end_lat,
              end_lng: before.end_lng,
              work_start: before.work_start,
              work_end: before.work_end,
              vaporizers: before.vaporizers,
              max_colonies_per_day: before.max_colonies_per_day,
              max_dose_grams_per_day: before.max_dose_grams_per_day,
              working_weekdays: before.working_weekdays,
              active: before.active,
            },
            beforeMembers,
          ),
        ),
        after: JSON.stringify(auditValues(columns, memberIds)),
      });
      return true;
    });
  } catch (error) {
    if (isNameTaken(error)) throw new CrewRefused(`There is already a crew called “${input.name}”. Choose another name.`, "name");
    throw error;
  }
}

/** Days from tomorrow over the next `days` days with more booked than they can now take (after a crew change). */
export async function overbookedDaysAhead(db: Knex, now = new Date(), days = 60): Promise<OverbookedDay[]> {
  const settings = await loadBusinessSettings(db);
  const tomorrow = addCalendarDays(dateInZone(now, settings.timeZone), 1);
  const rooms = await roomBetween(db, settings, tomorrow, addCalendarDays(tomorrow, days - 1));
  return rooms.filter((r) => r.booked > r.capacity).map((r) => ({ date: r.date, booked: r.booked, capacity: r.capacity }));
}
