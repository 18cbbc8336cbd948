// The crew's day as the phone keeps it: a snapshot of the run from the server, plus the
// changes made on the phone that are not yet confirmed by the server (the outbox).

export type SkipReason = "dead_out" | "queenless" | "supers_on" | "aggressive" | "not_reachable" | "other";

export const SKIP_REASON_NAMES: Record<SkipReason, string> = {
  dead_out: "Dead-out",
  queenless: "Queenless",
  supers_on: "Supers on",
  aggressive: "Aggressive",
  not_reachable: "Not reachable",
  other: "Other",
};

export type FieldColony = {
  label: string;
  broodBoxes: number;
  doseGrams: number;
  /** The box type the dose was worked out for, and how (boxes × rate, vaporizer loads). */
  boxType?: "deep" | "medium" | "nuc";
  boxTypeLabel?: string;
  doseAssumption?: string;
  /** Treated tallies this calendar year before this visit, and the season's cap. */
  applicationsBefore?: number;
  applicationCap?: number;
};

export type FieldTally = {
  colonyLabel: string;
  outcome: "treated" | "skipped";
  skipReason: SkipReason | null;
  skipNote: string | null;
  mites: number | null;
  /** Bees counted in the wash sample (null when only its volume was given). */
  beesSampled: number | null;
  /** The wash sample's volume in mL, when given instead of (or beside) the bees counted. */
  sampleMl?: number | null;
  /**
   * The bees the office estimated from the sample's volume when the wash was recorded (the
   * bees-per-100 mL setting may change later); absent or null once the crew changes the wash.
   * Never sent: the server estimates again from what it receives.
   */
  estimatedBees?: number | null;
  notes: string | null;
  /** What the crew found at the hive when it differs from the record (the colony is corrected and dosed from it). */
  broodBoxes?: number | null;
  boxType?: "deep" | "medium" | "nuc" | null;
  /** Brood seen (true), none seen (false), not looked (null). */
  broodSeen?: boolean | null;
};

export type FieldStop = {
  visitId: number;
  position: number;
  yardName: string;
  customerName: string;
  customerPhone: string | null;
  address: string | null;
  lat: number;
  lng: number;
  accessNotes: string;
  photoIds: number[];
  arrive: string;
  roundNumber: number;
  roundsPlanned: number;
  colonies: FieldColony[];
  supersConfirmed: boolean;
  status: "scheduled" | "deferred" | "in_progress" | "done" | "cancelled";
  tallies: Record<string, FieldTally>;
  /** The air temperature read at the yard, °C. */
  airTempC?: number | null;
  /** Rounds added to the course when this visit found brood in a course planned broodless, and the next round's day. */
  roundsAdded?: number;
  nextRoundDate?: string | null;
};

export type FieldSettings = {
  unitSystem: "metric" | "us";
  timeZone: string;
  sublimationSeconds: number;
  entranceClosedMinutes: number;
  doseGramsPerBroodBox: number;
  blockMinC: number;
  blockMaxC: number;
  miteThresholds: { fromMonth: number; toMonth: number; mitesPer100: number }[];
  /** Bees per 100 mL of sample, to show the estimate when only a volume is given (the server estimates regardless). */
  beesPer100Ml?: number;
  /** Dose rates of the smaller box types, so a box type corrected on the phone shows its dose before it is sent. */
  doseGramsPerMediumBox?: number;
  doseGramsPerNucBox?: number;
  /** The business's air temperature band for treating, °C (a warning outside it, never a block). */
  airTempMinC?: number;
  airTempMaxC?: number;
};

export type FieldRun = {
  runId: number;
  version: number;
  crewName: string;
  serviceDate: string;
  safetyChecked: boolean;
  driveMeters: number;
  driveSeconds: number;
  stops: FieldStop[];
  settings: FieldSettings;
  /** Box types whose dose rate the owner set above the label maximum (they confirmed their label allows it). */
  doseAboveLabel?: { boxType: string; label: string; grams: number }[];
  /** When the server made this snapshot (ISO). */
  loadedAt: string;
};

export type SafetyItems = { respirator: boolean; eyeProtection: boolean; gloves: boolean; vaporizerReady: boolean };

export type FieldChange =
  | { key: string; kind: "safety"; runId: number; runVersion: number; createdAt: string; payload: { runId: number; items: SafetyItems } }
  | { key: string; kind: "supers"; runId: number; runVersion: number; createdAt: string; payload: { visitId: number } }
  | { key: string; kind: "tally"; runId: number; runVersion: number; createdAt: string; payload: FieldTally & { visitId: number; recordedAt: string } }
  | { key: string; kind: "air_temp"; runId: number; runVersion: number; createdAt: string; payload: { visitId: number; airTempC: number } }
  | { key: string; kind: "finish"; runId: number; runVersion: number; createdAt: string; payload: { visitId: number; weatherNote: string | null; notes: string | null } };

export type SyncResult = { key: string; status: "applied" | "duplicate" | "conflict" | "refused"; message?: string };
