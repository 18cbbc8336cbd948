import type { Knex } from "knex";
import { addCalendarDays, calendarDaysBetween, roundsNeeded, type BroodStatus } from "~/domain/courses";
import { centigramsToGrams, gramsToCentigrams } from "~/domain/dose";
import { gramsAtDosePerColony } from "~/domain/yard-colony-doses";
import { bookingConfirmationEmail } from "~/emails/booking";
import type { BookingInput } from "~/forms/booking";
import { serverEnv } from "~/services/env.server";
import { requestEmailDelivery } from "~/services/jobs.server";
import { dateInZone } from "~/services/clock.server";
import { lockDayForColonies, yardDosesPerColony } from "./capacity.server";
import { queueEmail } from "./emails.server";
import { loadBusinessSettings } from "./settings.server";

/** Booking at most this many days ahead. */
export const BOOKING_HORIZON_DAYS = 180;

/** A booking that cannot be taken, with the form field the reason belongs to. */
export class BookingRefused extends Error {
  constructor(
    message: string,
    readonly field: "yardIds" | "serviceDate" | "form",
  ) {
    super(message);
  }
}

export type BookingResult = { bookingIds: number[]; visitIds: number[]; colonies: number; serviceDate: string };

/**
 * Books the customer's yards on one day, all or none: a course and its first visit per
 * yard, and a confirmation e-mail. The day's row is locked first, so concurrent bookings
 * of the same day are served one after the other and a day never takes more colonies
 * than fit.
 */
export async function bookYards(
  db: Knex,
  input: BookingInput & { customerId: number | string; userId: number | string },
  now = new Date(),
): Promise<BookingResult> {
  const settings = await loadBusinessSettings(db);
  const today = dateInZone(now, settings.timeZone);
  const ahead = calendarDaysBetween(today, input.serviceDate);
  if (ahead < 1) throw new BookingRefused("Choose a day from tomorrow on.", "serviceDate");
  if (ahead > BOOKING_HORIZON_DAYS) throw new BookingRefused(`Bookings open ${BOOKING_HORIZON_DAYS} days ahead; choose an earlier day.`, "serviceDate");
  const yardIds = [...new Set(input.yardIds)];

  const { result, emailId } = await db.transaction(async (trx) => {
    const yards = await trx("yards")
      .whereIn("id", yardIds)
      .where({ customer_id: Number(input.customerId) })
      .whereNull("archived_at")
      .orderBy("id") // locked in id order, so two bookings of the same yards cannot deadlock
      .forUpdate()
      .select("id", "name", "address", "colony_count", "brood_status");
    if (yards.length !== yardIds.length) throw new BookingRefused("One of the chosen yards is not in your account.", "yardIds");
    const empty = yards.find((y) => y.colony_count === 0);
    if (empty) throw new BookingRefused(`${empty.name} has no colonies to treat. Update the yard first.`, "yardIds");
    const alreadyBooked = await trx("visits")
      .join("yards", "yards.id", "visits.yard_id")
      .whereIn("visits.yard_id", yardIds)
      .whereIn("visits.status", ["scheduled", "in_progress"])
      .where("visits.service_date", ">=", today)
      .first("yards.name", "visits.service_date");
    if (alreadyBooked) {
      throw new BookingRefused(`${alreadyBooked.name} already has a visit booked on ${alreadyBooked.service_date}.`, "yardIds");
    }

    const colonies = yards.reduce((sum, y) => sum + y.colony_count, 0);
    // The acid these yards take: each yard's colonies × its planned dose per colony, from its
    // colonies as the crew last found them (the yard's own boxes when it has no colony rows).
    const doses = await yardDosesPerColony(trx, settings, yards.map((y) => Number(y.id)));
    const grams = centigramsToGrams(yards.reduce((sum, y) => sum + gramsToCentigrams(gramsAtDosePerColony(y.colony_count, doses.get(Number(y.id)) ?? 0)), 0));
    const room = await lockDayForColonies(trx, settings, input.serviceDate, colonies, grams);
    if (room.refusal === "closed") throw new BookingRefused("That day is not open for bookings. Choose another day.", "serviceDate");
    if (room.refusal === "full" && room.gramsShort && colonies <= room.remaining) {
      throw new BookingRefused(
        `That day's crews can apply ${room.gramsRemaining} g more; ${yards.length === 1 ? "this yard needs" : "these yards need"} ${grams} g. Choose another day or fewer yards.`,
        "serviceDate",
      );
    }
    if (room.refusal === "full") {
      throw new BookingRefused(
        room.remaining === 0
          ? "That day is full. Choose another day."
          : `That day has room for ${room.remaining} more colonies, and these yards have ${colonies}. Choose another day or fewer yards.`,
        "serviceDate",
      );
    }

    const bookingIds: number[] = [];
    const visitIds: number[] = [];
    for (const yard of yards) {
      const [booking] = await trx("bookings")
        .insert({
          customer_id: Number(input.customerId),
          yard_id: yard.id,
          service_date: input.serviceDate,
          time_preference: input.timePreference,
          colonies: yard.colony_count,
          status: "confirmed",
          notes: input.notes,
          created_by: Number(input.userId),
        })
        .returning("id");
      const rounds = roundsNeeded(yard.brood_status as BroodStatus, settings.roundsWithBrood);
      const [course] = await trx("courses")
        .insert({
          yard_id: yard.id,
          booking_id: booking.id,
          brood_status: yard.brood_status,
          rounds_planned: rounds,
          interval_days: rounds > 1 ? settings.roundIntervalDays : 0,
        })
        .returning("id");
      const [visit] = await trx("visits")
        .insert({
          course_id: course.id,
          yard_id: yard.id,
          round_number: 1,
          service_date: input.serviceDate,
          time_preference: input.timePreference,
          colonies_expected: yard.colony_count,
        })
        .returning("id");
      bookingIds.push(booking.id);
      visitIds.push(visit.id);
      await trx("audit_log").insert({
        actor_user_id: Number(input.userId),
        action: "booking.create",
        entity_type: "booking",
        entity_id: String(booking.id),
        after: JSON.stringify({ yardId: yard.id, serviceDate: input.serviceDate, colonies: yard.colony_count, rounds }),
      });
    }

    const customer = await trx("customers").where({ id: Number(input.customerId) }).first("name", "email");
    const maxRounds = Math.max(...yards.map((y) => roundsNeeded(y.brood_status as BroodStatus, settings.roundsWithBrood)));
    const email = bookingConfirmationEmail({
      customerName: customer!.name,
      serviceDate: input.serviceDate,
      timePreference: input.timePreference,
      yards: yards.map((y) => ({ name: y.name, colonies: y.colony_count, address: y.address })),
      roundsNote:
        maxRounds > 1
          ? `Colonies with brood need ${maxRounds} rounds about ${settings.roundIntervalDays} days apart; the next round is booked after each visit, around ${addCalendarDays(input.serviceDate, settings.roundIntervalDays)}.`
          : null,
      portalUrl: `${serverEnv().APP_URL}/portal/bookings`,
    });
    const emailId = await queueEmail(trx, {
      kind: "booking_confirmation",
      to: customer!.email,
      ...email,
      customerId: Number(input.customerId),
      bookingId: bookingIds[0],
      dedupeKey: `booking_confirmation:${bookingIds[0]}`,
    });
    return { result: { bookingIds, visitIds, colonies, serviceDate: input.serviceDate }, emailId };
  });
  if (emailId !== null) await requestEmailDelivery([emailId]);
  return result;
}
