import { afterAll, beforeEach, describe, expect, it } from "vitest";
import { NOT_AN_IMAGE, PHOTO_TOO_LARGE, photoForUser, storeYardPhoto } from "~/models/attachments.server";
import { createYard, updateYard } from "~/models/yard-edit.server";
import { yardSchema } from "~/forms/yard";
import { db } from "~/services/db.server";
import { resetDatabase } from "./reset-database";

afterAll(() => db.destroy());

const PNG_HEADER = [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a];
const JPEG_HEADER = [0xff, 0xd8, 0xff, 0xe0];

let owner: { userId: number; customerId: number };
let yardId: number;

async function aCustomer(email: string) {
  const [user] = await db("users").insert({ email, password_hash: "x", role: "customer", name: "Pat" }).returning("id");
  const [customer] = await db("customers").insert({ user_id: user.id, name: "Pat", email }).returning("id");
  return { userId: user.id as number, customerId: customer.id as number };
}

const yardInput = yardSchema.parse({ name: "Orchard", lat: "42.45", lng: "-76.48", colonyCount: "3", broodBoxesPerColony: "2", broodStatus: "brood", supersOff: "on", accessNotes: "Gate code 1234" });

beforeEach(async () => {
  await resetDatabase(db);
  owner = await aCustomer("pat@example.test");
  yardId = await createYard(db, owner.customerId, yardInput, owner.userId);
});

describe("yard photos", () => {
  it("stores a real image, recognised by its content", async () => {
    const bytes = new Uint8Array([...JPEG_HEADER, ...new Array(100).fill(7)]);
    const id = await storeYardPhoto(db, { yardId, name: "hives.jpg", bytes, uploadedBy: owner.userId });
    const row = await db("attachments").where({ id }).first();
    expect(row).toMatchObject({ content_type: "image/jpeg", byte_size: bytes.byteLength, yard_id: yardId });
  });

  it("refuses a renamed non-image with a clear message", async () => {
    const text = new TextEncoder().encode("%PDF-1.7 this is not a photo");
    await expect(storeYardPhoto(db, { yardId, name: "holiday.jpg", bytes: text, uploadedBy: owner.userId })).rejects.toThrow(NOT_AN_IMAGE);
    expect(await db("attachments").count("* as n").first()).toEqual({ n: 0 });
  });

  it("refuses an 11 MB image with a clear message", async () => {
    const big = new Uint8Array(11 * 1024 * 1024);
    big.set(PNG_HEADER);
    await expect(storeYardPhoto(db, { yardId, name: "huge.png", bytes: big, uploadedBy: owner.userId })).rejects.toThrow(PHOTO_TOO_LARGE);
    expect(await db("attachments").count("* as n").first()).toEqual({ n: 0 });
  });

  it("shows a photo to its customer and staff, not to another customer", async () => {
    const id = await storeYardPhoto(db, { yardId, name: "gate.png", bytes: new Uint8Array([...PNG_HEADER, 1, 2, 3]), uploadedBy: owner.userId });
    const other = await aCustomer("other@example.test");
    expect(await photoForUser(db, id, { role: "customer", customerId: String(owner.customerId), crewId: null })).not.toBeNull();
    expect(await photoForUser(db, id, { role: "office", customerId: null, crewId: null })).not.toBeNull();
    expect(await photoForUser(db, id, { role: "customer", customerId: String(other.customerId), crewId: null })).toBeNull();
    expect(await photoForUser(db, id, { role: "crew", customerId: null, crewId: "999" })).toBeNull();
  });
});

describe("yards", () => {
  it("keeps one colony row per colony when the count changes, and updates booked visits", async () => {
    expect((await db("colonies").where({ yard_id: yardId, active: true })).map((c) => c.label).sort()).toEqual(["H1", "H2", "H3"]);
    await updateYard(db, owner.customerId, yardId, { ...yardInput, colonyCount: 1 }, owner.userId);
    expect((await db("colonies").where({ yard_id: yardId, active: true })).map((c) => c.label)).toEqual(["H1"]);
    await updateYard(db, owner.customerId, yardId, { ...yardInput, colonyCount: 2 }, owner.userId);
    expect((await db("colonies").where({ yard_id: yardId, active: true })).map((c) => c.label).sort()).toEqual(["H1", "H2"]);
    expect(await db("colonies").where({ yard_id: yardId }).count("* as n").first()).toEqual({ n: 3 });
  });

  it("does not let one customer edit another's yard", async () => {
    const other = await aCustomer("other@example.test");
    expect(await updateYard(db, other.customerId, yardId, { ...yardInput, name: "Taken" }, other.userId)).toBe(false);
    expect((await db("yards").where({ id: yardId }).first())?.name).toBe("Orchard");
  });

  it("gives field messages for bad coordinates and counts", () => {
    const result = yardSchema.safeParse({ name: "", lat: "91", lng: "abc", colonyCount: "-1", broodBoxesPerColony: "1.5", broodStatus: "maybe" });
    expect(result.success).toBe(false);
    const byField = Object.fromEntries(result.error!.issues.map((i) => [i.path[0], i.message]));
    expect(byField).toMatchObject({
      name: expect.stringMatching(/name/),
      lat: "Latitude is between −90 and 90.",
      lng: "Enter the longitude as a number.",
      colonyCount: "Colonies cannot be fewer than 0.",
      broodBoxesPerColony: "Brood boxes are whole boxes.",
      broodStatus: "Choose whether the colonies have brood.",
    });
  });
});
