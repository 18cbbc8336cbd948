import { z } from "zod";
import { BOX_TYPES, MAX_BROOD_BOXES, MIN_BROOD_BOXES } from "~/domain/box-types";

function numberFrom(label: string) {
  return z.preprocess(
    (v) => (typeof v === "string" && v.trim() !== "" ? Number(v.trim()) : v === undefined || v === "" ? Number.NaN : v),
    z.number({ error: `Enter ${label} as a number.` }).refine(Number.isFinite, `Enter ${label} as a number.`),
  );
}

/** Why 0 brood boxes is refused (the yard form and the customer import). */
export const BROOD_BOX_MINIMUM_MESSAGE = "A living colony has at least one brood box.";

/** A yard as the customer (or the office) enters it. */
export const yardSchema = z.object({
  name: z.string().trim().min(1, "Give the yard a name, e.g. “Home yard”.").max(80, "Keep the name under 80 characters."),
  lat: numberFrom("the latitude").pipe(z.number().min(-90, "Latitude is between −90 and 90.").max(90, "Latitude is between −90 and 90.")),
  lng: numberFrom("the longitude").pipe(z.number().min(-180, "Longitude is between −180 and 180.").max(180, "Longitude is between −180 and 180.")),
  address: z
    .string()
    .trim()
    .max(200, "Keep the address under 200 characters.")
    .optional()
    .transform((v) => (v ? v : null)),
  colonyCount: numberFrom("the number of colonies").pipe(
    z.number().int("Colonies are counted in whole hives.").min(0, "Colonies cannot be fewer than 0.").max(200, "Enter at most 200 colonies; call us for more."),
  ),
  broodBoxesPerColony: numberFrom("the brood boxes per colony").pipe(
    // The dose goes by brood boxes: 0 would let a colony be tallied "treated" with 0 g.
    z.number().int("Brood boxes are whole boxes.").min(MIN_BROOD_BOXES, BROOD_BOX_MINIMUM_MESSAGE).max(MAX_BROOD_BOXES, `Enter at most ${MAX_BROOD_BOXES} brood boxes per colony.`),
  ),
  // The dose rate goes by the box type. Left out (an older form), it is a deep, the box the
  // label's rate is for; anything else sent is refused, never guessed.
  boxType: z.enum(BOX_TYPES, { error: "Choose the brood box type: deep, medium or nuc." }).default("deep"),
  broodStatus: z.enum(["brood", "broodless", "unknown"], { error: "Choose whether the colonies have brood." }),
  supersOff: z.preprocess((v) => v === "on" || v === "true" || v === true, z.boolean()),
  accessNotes: z.string().trim().max(2000, "Keep the access notes under 2,000 characters.").default(""),
});

export type YardInput = z.output<typeof yardSchema>;

export const PHOTO_MAX_BYTES = 10 * 1024 * 1024;
