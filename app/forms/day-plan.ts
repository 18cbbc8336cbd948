import { z } from "zod";

const id = z.coerce.number({ error: "Missing number." }).int().positive();

/** Everything the dispatcher's day screen can post, one schema per intent. */
export const dayActionSchema = z.discriminatedUnion(
  "intent",
  [
    z.object({
      intent: z.literal("plan"),
      keepLocked: z.preprocess((v) => v === "on" || v === "true", z.boolean()),
      replanPublished: z.preprocess((v) => v === "on" || v === "true", z.boolean()),
    }),
    z.object({ intent: z.literal("move"), visitId: id, toCrewId: id, toPosition: z.coerce.number().int().min(0, "Position starts at 1.") }),
    z.object({ intent: z.literal("lock"), visitId: id, locked: z.enum(["true", "false"]).transform((v) => v === "true") }),
    z.object({ intent: z.literal("publish"), runId: id }),
    z.object({ intent: z.literal("next-day"), visitId: id }),
  ],
  { error: "Unknown action." },
);
