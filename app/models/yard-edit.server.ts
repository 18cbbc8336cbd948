import type { Knex } from "knex";
import { yardDoseGramsPerColony, type YardDoseShape } from "~/domain/capacity";
import { boxTypeOrDeep } from "~/domain/box-types";
import { coloniesAfterYardEdit, colonyShapes, editResetsColonyBoxes, type StoredColony } from "~/domain/colony-findings";
import { plannedDoseGramsPerColony } from "~/domain/yard-colony-doses";
import { centigramsToGrams, gramsToCentigrams } from "~/domain/dose";
import type { BusinessSettings } from "~/domain/settings";
import type { YardInput } from "~/forms/yard";
import { lockDaysForColonies, yardDosesPerColony } from "./capacity.server";
import { loadBusinessSettings } from "./settings.server";

/** A day with booked visits of the yard that cannot take the bigger colony count. */
export type CrowdedDay = {
  date: string;
  visitIds: number[];
  closed: boolean;
  /** Colonies the day can still take. */
  remaining: number;
  /** Colonies the new count would add to the day (0 or less when only the dose grows). */
  adding: number;
  /** Whether the colonies are what does not fit. */
  coloniesShort: boolean;
  /** Grams the day's crews can still apply (null: grams do not bind the day; 0 on a closed day). */
  gramsRemaining: number | null;
  /** Grams the new count and boxes would add to the day. */
  addingGrams: number;
  /** Whether the grams are what does not fit. */
  gramsShort: boolean;
  /** The largest colony count this yard's visits on that day still fit (in colonies and grams, at the new boxes). */
  mostColonies: number;
};

/** Who reads the refusal: the customer asks us to move a visit, the dispatcher moves it. */
export type EditAudience = "customer" | "dispatcher";

const colonies = (n: number) => `${n} ${n === 1 ? "colony" : "colonies"}`;

function dayNote(d: CrowdedDay): string {
  if (d.closed) return `${d.date} (closed)`;
  const notes: string[] = [];
  if (d.coloniesShort || !d.gramsShort) notes.push(`room for ${d.remaining} more, ${d.adding} needed`);
  if (d.gramsShort) notes.push(`its crews can apply ${d.gramsRemaining} g more; this yard needs ${d.addingGrams} g more`);
  return `${d.date} (${notes.join("; ")})`;
}

/** The message at the yard field whose change does not fit on a booked day (colony count, box type or brood boxes). */
export function colonyCountRefusal(days: readonly CrowdedDay[], colonyCount: number, audience: EditAudience, dosePerColony?: number): string {
  const dayNotes = days.map(dayNote).join(", ");
  const most = Math.min(...days.map((d) => d.mostColonies));
  const one = days.length === 1;
  const what = days.some((d) => d.gramsShort) && dosePerColony != null ? `${colonies(colonyCount)} at ${dosePerColony} g each` : colonies(colonyCount);
  if (audience === "dispatcher") {
    const pages = days.flatMap((d) => d.visitIds.map((id) => `/dispatch/visits/${id}`)).join(", ");
    return (
      `Nothing was saved: ${what} do not fit on the booked ${one ? "day" : "days"} ${dayNotes}. ` +
      `Move the ${one ? "visit" : "visits"} to a day with room (${pages}), or keep the count at ${most} or fewer.`
    );
  }
  return (
    `Nothing was saved: ${what} do not fit on the ${one ? "day" : "days"} of your booked ${one ? "visit" : "visits"}, ${dayNotes}. ` +
    `Book fewer colonies (at most ${most} for now), or ask us to move the ${one ? "visit" : "visits"} to a day with room.`
  );
}

/** The yard form fields whose change can take more room on a booked day. */
export type RoomField = "colonyCount" | "boxType" | "broodBoxesPerColony";

/** An edit refused because a booked day has no room for the bigger colony count or dose; nothing was written. */
export class YardEditRefused extends Error {
  constructor(
    readonly days: CrowdedDay[],
    readonly colonyCount: number,
    /** The field the refusal belongs to: the colony count, or the boxes when only they grew the dose. */
    readonly field: RoomField = "colonyCount",
    /** Grams per colony at the new boxes. */
    readonly dosePerColony?: number,
  ) {
    super(colonyCountRefusal(days, colonyCount, "customer", dosePerColony));
  }

  messageFor(audience: EditAudience): string {
    return colonyCountRefusal(this.days, this.colonyCount, audience, this.dosePerColony);
  }
}

type BookedVisit = { id: number; service_date: string; colonies_expected: number };

/** Which of the yard's box figures an edit changes: the field a refusal for grams is shown at. */
type YardBoxesChange = "none" | "type" | "boxes";

function boxesChange(before: YardDoseShape, after: YardDoseShape): YardBoxesChange {
  if (before.boxType !== after.boxType) return "type";
  return before.broodBoxesPerColony !== after.broodBoxesPerColony ? "boxes" : "none";
}

/** Grams per colony a yard is planned with now, from its active colonies (capacity.server.ts). */
async function plannedDoseNow(trx: Knex.Transaction, settings: BusinessSettings, yardId: number, yard: YardDoseShape): Promise<number> {
  return (await yardDosesPerColony(trx, settings, [yardId])).get(yardId) ?? yardDoseGramsPerColony(yard, settings);
}

/**
 * Locks the days where the edit makes a booked visit bigger (in colonies, or in grams:
 * colonies × the yard's planned dose per colony, before and after the edit), in date order,
 * and throws YardEditRefused when one of them has no room for it (the same lock and rule as a
 * booking, so a concurrent booking and this edit cannot both take a day's last room). Visits
 * that keep or lose colonies and grams need no room and no lock.
 */
async function holdRoomForBiggerVisits(
  trx: Knex.Transaction,
  settings: BusinessSettings,
  visits: readonly BookedVisit[],
  doses: { beforeGrams: number; afterGrams: number; boxesChanged: YardBoxesChange },
  input: YardInput,
) {
  const colonyCount = input.colonyCount;
  const oldDose = gramsToCentigrams(doses.beforeGrams);
  const newDose = gramsToCentigrams(doses.afterGrams);
  // Centigrams each visit adds: the day's booked grams read under the lock still count the old colonies.
  const gramsAdded = (v: BookedVisit) => colonyCount * newDose - v.colonies_expected * oldDose;
  const growing = visits.filter((v) => colonyCount > v.colonies_expected || gramsAdded(v) > 0);
  if (growing.length === 0) return;
  const checks = await lockDaysForColonies(
    trx,
    settings,
    growing.map((v) => ({ date: v.service_date, adding: colonyCount - v.colonies_expected, addingGrams: centigramsToGrams(gramsAdded(v)) })),
  );
  const crowded: CrowdedDay[] = checks
    .filter((check) => check.refusal !== null)
    .map((check) => {
      const onDay = growing.filter((v) => v.service_date === check.date);
      const current = onDay.reduce((sum, v) => sum + v.colonies_expected, 0);
      let most = Math.floor((current + check.remaining) / onDay.length);
      if (check.gramsRemaining != null && newDose > 0) {
        const gramsFree = onDay.reduce((sum, v) => sum + v.colonies_expected * oldDose, 0) + gramsToCentigrams(check.gramsRemaining);
        most = Math.min(most, Math.floor(gramsFree / (onDay.length * newDose)));
      }
      return {
        date: check.date,
        visitIds: onDay.map((v) => v.id),
        closed: check.refusal === "closed",
        remaining: check.remaining, // 0 on a closed day
        adding: check.adding,
        coloniesShort: check.adding > check.remaining,
        gramsRemaining: check.gramsRemaining,
        addingGrams: check.addingGrams,
        gramsShort: check.gramsShort,
        mostColonies: Math.max(0, most),
      };
    });
  if (crowded.length === 0) return;
  const field: RoomField =
    growing.some((v) => colonyCount > v.colonies_expected) || doses.boxesChanged === "none"
      ? "colonyCount"
      : doses.boxesChanged === "type"
        ? "boxType"
        : "broodBoxesPerColony";
  throw new YardEditRefused(crowded, colonyCount, field, centigramsToGrams(newDose));
}

function yardColumns(input: YardInput) {
  return {
    name: input.name,
    lat: input.lat,
    lng: input.lng,
    address: input.address,
    colony_count: input.colonyCount,
    brood_boxes_per_colony: input.broodBoxesPerColony,
    box_type: input.boxType,
    brood_status: input.broodStatus,
    supers_off: input.supersOff,
    access_notes: input.accessNotes,
  };
}

/** What a yard edit does to the colonies it keeps: set their boxes, their brood status, both or neither. */
type ColonyReset = { boxes: boolean; broodStatus: boolean };

/**
 * Keeps one active colony row per colony (H1…Hn): adds rows, or retires the highest-numbered.
 * A new or returning colony takes the yard's figures. A colony that stays keeps what the crew
 * found at the hive (brood boxes, box type, brood seen) unless the edit changed that figure of
 * the yard (app/domain/colony-findings.ts).
 */
async function matchColonies(trx: Knex.Transaction, yardId: number, input: YardInput, reset: ColonyReset) {
  const existing = await trx("colonies").where({ yard_id: yardId }).select("id", "label", "active");
  const byLabel = new Map(existing.map((c) => [c.label as string, c]));
  const yardFigures = { brood_boxes: input.broodBoxesPerColony, box_type: input.boxType, brood_status: input.broodStatus };
  for (let n = 1; n <= input.colonyCount; n++) {
    const row = byLabel.get(`H${n}`);
    if (!row) await trx("colonies").insert({ yard_id: yardId, label: `H${n}`, ...yardFigures });
    else if (!row.active) await trx("colonies").where({ id: row.id }).update({ active: true, ...yardFigures, updated_at: trx.fn.now() });
    else if (reset.boxes || reset.broodStatus) {
      await trx("colonies")
        .where({ id: row.id })
        .update({
          ...(reset.boxes ? { brood_boxes: input.broodBoxesPerColony, box_type: input.boxType } : {}),
          ...(reset.broodStatus ? { brood_status: input.broodStatus } : {}),
          updated_at: trx.fn.now(),
        });
    }
  }
  const retire = existing.filter((c) => c.active && (!/^H\d+$/.test(c.label) || Number(c.label.slice(1)) > input.colonyCount)).map((c) => c.id);
  if (retire.length) await trx("colonies").whereIn("id", retire).update({ active: false, updated_at: trx.fn.now() });
}

export async function createYard(db: Knex, customerId: number | string, input: YardInput, actorUserId: number | string): Promise<number> {
  return db.transaction(async (trx) => {
    const [yard] = await trx("yards").insert({ customer_id: Number(customerId), ...yardColumns(input) }).returning("id");
    await matchColonies(trx, yard.id, input, { boxes: true, broodStatus: true });
    await trx("audit_log").insert({ actor_user_id: Number(actorUserId), action: "yard.create", entity_type: "yard", entity_id: String(yard.id), after: JSON.stringify(input) });
    return yard.id as number;
  });
}

/**
 * Updates a yard of this customer; false when the yard is not theirs. Booked visits take the
 * new colony count, so the day's room and the crew's dose follow the change. A bigger count,
 * or boxes that take more acid, must fit on each of those days, in colonies and in the crews'
 * grams (YardEditRefused otherwise, and nothing is written). The colonies keep what the crew
 * found at the hive unless the edit changes the yard's boxes (or brood status), which then
 * every colony takes.
 * Locks: the yard, its booked visits (by id), then their days in date order — a booking
 * takes its yards before its day and a reschedule its visit before its day, the same order.
 */
export async function updateYard(db: Knex, customerId: number | string, yardId: number, input: YardInput, actorUserId: number | string): Promise<boolean> {
  return db.transaction(async (trx) => {
    const before = await trx("yards").where({ id: yardId, customer_id: Number(customerId) }).whereNull("archived_at").forUpdate().first();
    if (!before) return false;
    const booked: BookedVisit[] = await trx("visits")
      .where({ yard_id: yardId, status: "scheduled" })
      .orderBy("id")
      .forUpdate()
      .select("id", "service_date", "colonies_expected");
    const settings = await loadBusinessSettings(trx);
    const beforeBoxes = { boxType: boxTypeOrDeep(before.box_type), broodBoxesPerColony: Number(before.brood_boxes_per_colony) };
    const resetBoxes = editResetsColonyBoxes(beforeBoxes, input);
    // The grams per colony before the edit (as the day's booked grams count them) and after it,
    // from the colonies as they will stand: kept as the crew found them, or set to new boxes.
    const beforeGrams = await plannedDoseNow(trx, settings, yardId, beforeBoxes);
    const stored: StoredColony[] = (
      await trx("colonies").where({ yard_id: yardId }).select("label", "active", "brood_boxes", "box_type")
    ).map((c) => ({ label: c.label, active: Boolean(c.active), broodBoxes: Number(c.brood_boxes), boxType: boxTypeOrDeep(c.box_type) }));
    const afterGrams = plannedDoseGramsPerColony(colonyShapes(coloniesAfterYardEdit(stored, input, resetBoxes)), input, settings);
    await holdRoomForBiggerVisits(trx, settings, booked, { beforeGrams, afterGrams, boxesChanged: boxesChange(beforeBoxes, input) }, input);
    await trx("yards").where({ id: yardId }).update({ ...yardColumns(input), updated_at: trx.fn.now() });
    await matchColonies(trx, yardId, input, { boxes: resetBoxes, broodStatus: before.brood_status !== input.broodStatus });
    // Only the visits whose days were checked above; one added meanwhile (a next round) took
    // its day's room with the count it was created with.
    if (booked.length) {
      await trx("visits").whereIn("id", booked.map((v) => v.id)).update({ colonies_expected: input.colonyCount, updated_at: trx.fn.now() });
    }
    await trx("audit_log").insert({
      actor_user_id: Number(actorUserId),
      action: "yard.update",
      entity_type: "yard",
      entity_id: String(yardId),
      before: JSON.stringify(before),
      after: JSON.stringify(input),
    });
    return true;
  });
}
