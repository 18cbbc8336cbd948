import type { Knex } from "knex";
import { PHOTO_MAX_BYTES } from "~/forms/yard";

/** Image types accepted, recognised by their first bytes, never by name or declared type. */
const SIGNATURES: { type: string; test: (b: Uint8Array) => boolean }[] = [
  { type: "image/jpeg", test: (b) => b[0] === 0xff && b[1] === 0xd8 && b[2] === 0xff },
  { type: "image/png", test: (b) => [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a].every((v, i) => b[i] === v) },
  { type: "image/gif", test: (b) => String.fromCharCode(...b.slice(0, 6)) === "GIF87a" || String.fromCharCode(...b.slice(0, 6)) === "GIF89a" },
  { type: "image/webp", test: (b) => String.fromCharCode(...b.slice(0, 4)) === "RIFF" && String.fromCharCode(...b.slice(8, 12)) === "WEBP" },
];

export function imageTypeOf(bytes: Uint8Array): string | null {
  return SIGNATURES.find((s) => s.test(bytes))?.type ?? null;
}

export class PhotoRefused extends Error {}

export const PHOTO_TOO_LARGE = "That photo is larger than 10 MB. Choose a smaller photo or take it at a lower resolution.";
export const NOT_AN_IMAGE = "That file is not a photo Varroute can show. Upload a JPEG, PNG, WebP or GIF image.";

/** Stores a yard photo in the database (so every app instance can serve it), checked by content. */
export async function storeYardPhoto(
  db: Knex,
  input: { yardId: number; name: string; bytes: Uint8Array; uploadedBy: number | string },
): Promise<number> {
  if (input.bytes.byteLength === 0) throw new PhotoRefused("That file is empty. Choose a photo.");
  if (input.bytes.byteLength > PHOTO_MAX_BYTES) throw new PhotoRefused(PHOTO_TOO_LARGE);
  const type = imageTypeOf(input.bytes);
  if (!type) throw new PhotoRefused(NOT_AN_IMAGE);
  return db.transaction(async (trx) => {
    const [row] = await trx("attachments")
      .insert({
        yard_id: input.yardId,
        original_name: input.name.slice(0, 200) || "photo",
        content_type: type,
        byte_size: input.bytes.byteLength,
        content: Buffer.from(input.bytes),
        uploaded_by: Number(input.uploadedBy),
      })
      .returning("id");
    await trx("audit_log").insert({
      actor_user_id: Number(input.uploadedBy),
      action: "yard.photo_add",
      entity_type: "yard",
      entity_id: String(input.yardId),
      after: JSON.stringify({ attachmentId: row.id, type, bytes: input.bytes.byteLength }),
    });
    return row.id as number;
  });
}

export type PhotoSummary = { id: number; name: string; byteSize: number; createdAt: Date };

export async function listYardPhotos(db: Knex, yardId: number): Promise<PhotoSummary[]> {
  return db("attachments")
    .where({ yard_id: yardId })
    .orderBy("created_at")
    .select("id", "original_name as name", "byte_size as byteSize", "created_at as createdAt");
}

export async function deleteYardPhoto(db: Knex, yardId: number, attachmentId: number, actorUserId: number | string): Promise<boolean> {
  return db.transaction(async (trx) => {
    const deleted = await trx("attachments").where({ id: attachmentId, yard_id: yardId }).delete();
    if (deleted) {
      await trx("audit_log").insert({ actor_user_id: Number(actorUserId), action: "yard.photo_delete", entity_type: "yard", entity_id: String(yardId), before: JSON.stringify({ attachmentId }) });
    }
    return deleted > 0;
  });
}

/** A photo's bytes if this user may see it: its yard's customer, staff, or a crew with the
 *  yard on one of its runs. Anything else is "not found", whether it exists or not. */
export async function photoForUser(
  db: Knex,
  attachmentId: number,
  user: { role: string; customerId: string | null; crewId: string | null },
): Promise<{ contentType: string; content: Buffer; name: string } | null> {
  const row = await db("attachments")
    .leftJoin("yards", "yards.id", "attachments.yard_id")
    .leftJoin("visits", "visits.id", "attachments.visit_id")
    .where("attachments.id", attachmentId)
    .first("attachments.content_type", "attachments.content", "attachments.original_name", db.raw("coalesce(attachments.yard_id, visits.yard_id) as yard_id"), "yards.customer_id");
  if (!row) return null;
  const yardId = (row as unknown as { yard_id: number }).yard_id;
  let allowed = ["dispatcher", "office", "owner"].includes(user.role);
  if (user.role === "customer") {
    const yard = await db("yards").where({ id: yardId }).first("customer_id");
    allowed = yard !== undefined && String(yard.customer_id) === user.customerId;
  }
  if (user.role === "crew" && user.crewId) {
    allowed = Boolean(
      await db("stops").join("runs", "runs.id", "stops.run_id").join("visits", "visits.id", "stops.visit_id").where("runs.crew_id", Number(user.crewId)).where("visits.yard_id", yardId).first("stops.id"),
    );
  }
  return allowed ? { contentType: row.content_type, content: row.content, name: row.original_name } : null;
}
