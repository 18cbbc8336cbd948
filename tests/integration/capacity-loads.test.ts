import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { crewDayCapacityColonies } from "~/domain/capacity";
import { addCalendarDays } from "~/domain/courses";
import { defaultBusinessSettings } from "~/domain/settings";
import { lockDayForColonies, roomBetween, withTypicalLoads } from "~/models/capacity.server";
import { crewEstimateBasis, listCrews } from "~/models/crews.server";
import { dateInZone } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { stopJobs } from "~/services/jobs.server";
import { resetDatabase } from "./reset-database";

// The booking calendar's estimate of a crew's day counts a typical colony at the vaporizer
// loads most colonies on the books take: where doses run above one load, a day takes fewer.

afterAll(async () => {
  await stopJobs();
  await db.destroy();
});
beforeEach(() => resetDatabase(db));

const settings = defaultBusinessSettings; // 1 g per deep box, at most 2 g a vaporizer load
const day = addCalendarDays(dateInZone(new Date(), settings.timeZone), 10);
const crew = { workMinutes: 9 * 60, vaporizers: 2 };

async function aCrew() {
  await db("crews").insert({
    name: "Crew A",
    start_label: "Shop",
    start_lat: 42.44,
    start_lng: -76.5,
    work_start: "08:00",
    work_end: "17:00",
    vaporizers: crew.vaporizers,
    working_weekdays: [1, 2, 3, 4, 5, 6, 7],
  });
}

async function aYard(colonies: number, deepBoxes: number): Promise<number> {
  const tag = Math.random().toString(36).slice(2);
  const [user] = await db("users").insert({ email: `c${tag}@example.test`, password_hash: "x", role: "customer", name: "C" }).returning("id");
  const [customer] = await db("customers").insert({ user_id: user.id, name: `C ${tag}`, email: `c${tag}@example.test` }).returning("id");
  const [yard] = await db("yards")
    .insert({ customer_id: customer.id, name: `Yard ${tag}`, lat: 42.4, lng: -76.4, colony_count: colonies, box_type: "deep", brood_boxes_per_colony: deepBoxes, brood_status: "broodless" })
    .returning("id");
  return Number(yard.id);
}

async function capacityOn(date: string): Promise<number> {
  const [room] = await roomBetween(db, settings, date, date);
  return room.capacity;
}

describe("a crew's day by the vaporizer loads of a typical colony", () => {
  it("takes fewer colonies a day when most colonies on the books need two loads, and counts only yards in use", async () => {
    await aCrew();
    const oneLoad = crewDayCapacityColonies(crew, { ...settings, loadsPerTypicalColony: 1 });
    const twoLoads = crewDayCapacityColonies(crew, { ...settings, loadsPerTypicalColony: 2 });
    expect(twoLoads).toBeLessThan(oneLoad);

    // No yard yet: one load a colony.
    expect(await capacityOn(day)).toBe(oneLoad);
    expect((await crewEstimateBasis(db)).loadsPerTypicalColony).toBe(1);

    // 10 colonies of 2 deep boxes (2 g: one load) and 20 of 3 (3 g: two loads of at most 2 g).
    await aYard(10, 2);
    const big = await aYard(20, 3);
    expect(await capacityOn(day)).toBe(twoLoads);
    expect((await crewEstimateBasis(db)).loadsPerTypicalColony).toBe(2);
    const [listed] = await listCrews(db);
    expect(listed.estimatedColoniesPerDay).toBe(twoLoads);

    // Bookings are held to the same figure under the day's lock.
    const check = await db.transaction((trx) => lockDayForColonies(trx, settings, day, twoLoads + 1));
    expect(check).toMatchObject({ capacity: twoLoads, refusal: "full" });
    const fits = await db.transaction((trx) => lockDayForColonies(trx, settings, day, twoLoads));
    expect(fits.refusal).toBeNull();

    // Read once per write: settings that carry the loads are taken as they are.
    const withLoads = await withTypicalLoads(db, settings);
    expect(withLoads.loadsPerTypicalColony).toBe(2);
    expect(await withTypicalLoads(db, withLoads)).toBe(withLoads);

    // An archived yard no longer counts: one load again.
    await db("yards").where({ id: big }).update({ archived_at: db.fn.now() });
    expect(await capacityOn(day)).toBe(oneLoad);
  });

  it("goes by the colonies as the crew found them when they differ from the yard", async () => {
    await aCrew();
    const yard = await aYard(6, 1); // 1 g a colony: one load by the yard's figures
    expect((await crewEstimateBasis(db)).loadsPerTypicalColony).toBe(1);
    // The crew found 3 deep boxes in one colony: the yard's time is planned for its biggest colony.
    await db("colonies").insert(
      Array.from({ length: 6 }, (_, i) => ({ yard_id: yard, label: `H${i + 1}`, brood_boxes: i === 0 ? 3 : 1, box_type: "deep", brood_status: "broodless" })),
    );
    expect((await crewEstimateBasis(db)).loadsPerTypicalColony).toBe(2);
    expect(await capacityOn(day)).toBe(crewDayCapacityColonies(crew, { ...settings, loadsPerTypicalColony: 2 }));
  });
});
