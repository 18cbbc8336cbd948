import type { Knex } from "knex";
import bcrypt from "bcryptjs";
import { invoiceForVisit, formatInvoiceNumber } from "../app/domain/billing.ts";
import { doseGramsForColonyOfType, type BoxType } from "../app/domain/box-types.ts";
import { haversineKilometres, type LatLng } from "../app/domain/geo.ts";
import { businessSettingsSchema } from "../app/domain/settings.ts";
import { timeDemoRun } from "./demo-timing.ts";

// Demo data for Varroute: a fictional two-crew oxalic acid vapor contractor,
// "Bramblecomb Hive Care", working out of Ithaca, New York, with invented hobbyist
// customers within about 60 km. Every name, street and phone number is invented
// (phones use the reserved 555-01xx range, e-mail the reserved example/test domains).
//
// Deterministic: all choices come from a seeded PRNG. The only input taken from the
// clock is today's date in the business time zone (the "season anchor"), so past
// visits always fall in the weeks before today and bookings in the weeks after it.
// SEED_TODAY=YYYY-MM-DD overrides the anchor (for trying other dates).
//
// Everything is written in one transaction. The seed refuses to run on a database
// that already has users; scripts/seed-if-empty.ts only calls it on an empty one.

export const DEMO_PASSWORD = "demo-bees-2026";
export const DEMO_BUSINESS_NAME = "Bramblecomb Hive Care";
export const DEMO_TIME_ZONE = "America/New_York";
export const DEMO_SIGN_INS = {
  owner: "owner@demo.varroute.test",
  dispatcher: "dispatcher@demo.varroute.test",
  office: "office@demo.varroute.test",
  crew: "crew@demo.varroute.test",
  customer: "customer@demo.varroute.test",
} as const;

// The demo business's settings, saved as its settings: the demo's invoices, doses and run
// times are computed from these with the app's own billing, dose, service-time and
// drive-estimate functions, so what the demo shows is what the app would have made itself.
// The figures left out keep their defaults (among them the drive estimate, circuity 1.2 at
// 60 km/h, and the service-time model's set-up and hive-cycle figures).
export const DEMO_SETTINGS = businessSettingsSchema.parse({
  businessName: DEMO_BUSINESS_NAME,
  businessAddress: "12 Kiln Lane, Ithaca, NY 14850",
  timeZone: DEMO_TIME_ZONE,
  // Invented for the demo, in no real register: a business enters the number on its own label.
  productRegistrationNumber: "DEMO-0000",
  pricePerColonyCents: 900,
  tripFeeCents: 3500,
  minimumPerVisitCents: 0,
  taxRateBasisPoints: 800,
  paymentTermsDays: 30,
  roundsWithBrood: 3,
  roundIntervalDays: 7,
});
const PAYMENT_TERMS_DAYS = DEMO_SETTINGS.paymentTermsDays;
const BCRYPT_COST = 10;

// ---------------------------------------------------------------- randomness

class Rng {
  private state: number;
  constructor(seed: number) {
    this.state = seed >>> 0;
  }
  /** mulberry32: uniform in [0, 1). */
  float(): number {
    this.state = (this.state + 0x6d2b79f5) >>> 0;
    let t = this.state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  }
  int(min: number, max: number): number {
    return min + Math.floor(this.float() * (max - min + 1));
  }
  chance(p: number): boolean {
    return this.float() < p;
  }
  pick<T>(items: readonly T[]): T {
    if (items.length === 0) throw new Error("demo seed: pick from an empty list");
    return items[Math.floor(this.float() * items.length)];
  }
  weighted<T>(pairs: ReadonlyArray<readonly [T, number]>): T {
    const total = pairs.reduce((sum, [, w]) => sum + w, 0);
    let r = this.float() * total;
    for (const [value, weight] of pairs) {
      r -= weight;
      if (r < 0) return value;
    }
    return pairs[pairs.length - 1][0];
  }
  shuffle<T>(items: readonly T[]): T[] {
    const copy = [...items];
    for (let i = copy.length - 1; i > 0; i--) {
      const j = Math.floor(this.float() * (i + 1));
      [copy[i], copy[j]] = [copy[j], copy[i]];
    }
    return copy;
  }
}

// ---------------------------------------------------------------- days and times

const DAY_MS = 86_400_000;

function parseDay(day: string): number {
  if (!/^\d{4}-\d{2}-\d{2}$/.test(day)) throw new Error(`demo seed: bad date ${day}`);
  const [y, m, d] = day.split("-").map(Number);
  const ms = Date.UTC(y, m - 1, d);
  if (new Date(ms).toISOString().slice(0, 10) !== day) throw new Error(`demo seed: bad date ${day}`);
  return ms;
}
function formatDay(ms: number): string {
  return new Date(ms).toISOString().slice(0, 10);
}
function addDays(day: string, n: number): string {
  return formatDay(parseDay(day) + n * DAY_MS);
}
function daysBetween(from: string, to: string): number {
  return Math.round((parseDay(to) - parseDay(from)) / DAY_MS);
}
function dayOfWeek(day: string): number {
  return new Date(parseDay(day)).getUTCDay(); // 0 = Sunday
}
function isWorkingDay(day: string): boolean {
  const dow = dayOfWeek(day);
  return dow >= 1 && dow <= 5;
}
function nextWorkingDay(day: string): string {
  let d = addDays(day, 1);
  while (!isWorkingDay(d)) d = addDays(d, 1);
  return d;
}
function workingDayOnOrAfter(day: string): string {
  return isWorkingDay(day) ? day : nextWorkingDay(day);
}
function previousWorkingDay(day: string): string {
  let d = addDays(day, -1);
  while (!isWorkingDay(d)) d = addDays(d, -1);
  return d;
}
function daysFromTo(from: string, to: string): string[] {
  const out: string[] = [];
  for (let d = from; d <= to; d = addDays(d, 1)) out.push(d);
  return out;
}

const zoneFormat = new Intl.DateTimeFormat("en-US", {
  timeZone: DEMO_TIME_ZONE,
  hourCycle: "h23",
  year: "numeric",
  month: "numeric",
  day: "numeric",
  hour: "numeric",
  minute: "numeric",
  second: "numeric",
});

function zoneFields(ms: number): Record<string, number> {
  const out: Record<string, number> = {};
  for (const part of zoneFormat.formatToParts(new Date(ms))) {
    if (part.type !== "literal") out[part.type] = Number(part.value);
  }
  return out;
}
function zoneOffsetMs(ms: number): number {
  const f = zoneFields(ms);
  const asUtc = Date.UTC(f.year, f.month - 1, f.day, f.hour % 24, f.minute, f.second);
  return asUtc - Math.floor(ms / 1000) * 1000;
}
/** Wall-clock time `seconds` after midnight of `day` in the business time zone. */
function localTime(day: string, seconds: number): Date {
  const wall = parseDay(day) + Math.round(seconds) * 1000;
  let t = wall - zoneOffsetMs(wall);
  const second = wall - zoneOffsetMs(t);
  if (second !== t) t = second;
  return new Date(t);
}
function todayInBusinessZone(now: Date): string {
  const f = zoneFields(now.getTime());
  return `${f.year}-${String(f.month).padStart(2, "0")}-${String(f.day).padStart(2, "0")}`;
}
function hm(h: number, m = 0): number {
  return h * 3600 + m * 60;
}
/** "08:00" for minutes after midnight. */
function clock(minutes: number): string {
  return `${String(Math.floor(minutes / 60)).padStart(2, "0")}:${String(minutes % 60).padStart(2, "0")}`;
}

// ---------------------------------------------------------------- places

const ITHACA: LatLng = { lat: 42.444, lng: -76.5019 };
const MAX_KM_FROM_ITHACA = 60;

// Rough water polygons, [lat, lng] corners. They over-cover the lakes: the brief's boxes for
// Cayuga (−76.70…−76.50, 42.45…42.95) and Seneca (−76.95…−76.85 from Watkins Glen north),
// plus the parts of those lakes that drift west of the boxes further north, and Owasco Lake
// (near Moravia). A yard inside any of them is refused.
const WATER: ReadonlyArray<{ name: string; ring: ReadonlyArray<readonly [number, number]> }> = [
  { name: "Cayuga Lake", ring: [[42.45, -76.7], [42.45, -76.5], [42.95, -76.5], [42.95, -76.7]] },
  { name: "Cayuga Lake (north, west shore)", ring: [[42.65, -76.8], [42.65, -76.68], [42.96, -76.68], [42.96, -76.8]] },
  { name: "Seneca Lake", ring: [[42.38, -76.95], [42.38, -76.85], [42.9, -76.85], [42.9, -76.95]] },
  { name: "Seneca Lake (north, west shore)", ring: [[42.6, -77.0], [42.6, -76.93], [42.9, -76.93], [42.9, -77.0]] },
  { name: "Owasco Lake", ring: [[42.74, -76.56], [42.74, -76.48], [42.92, -76.48], [42.92, -76.56]] },
];

function insideRing(p: LatLng, ring: ReadonlyArray<readonly [number, number]>): boolean {
  let inside = false;
  for (let i = 0, j = ring.length - 1; i < ring.length; j = i++) {
    const [yi, xi] = ring[i];
    const [yj, xj] = ring[j];
    if (yi > p.lat !== yj > p.lat && p.lng < ((xj - xi) * (p.lat - yi)) / (yj - yi) + xi) inside = !inside;
  }
  return inside;
}

/** Name of the (roughly drawn) lake a point falls in, or null when it is on land. */
export function lakeAt(p: LatLng): string | null {
  for (const water of WATER) if (insideRing(p, water.ring)) return water.name;
  return null;
}

/** Throws when any point lies in a lake polygon or farther than 60 km from Ithaca. */
export function assertDemoPlacesOnLand(points: ReadonlyArray<LatLng & { label: string }>): void {
  const bad: string[] = [];
  for (const p of points) {
    const lake = lakeAt(p);
    if (lake) bad.push(`${p.label} (${p.lat}, ${p.lng}) is in ${lake}`);
    const km = haversineKilometres(ITHACA, p);
    if (km > MAX_KM_FROM_ITHACA) bad.push(`${p.label} is ${km.toFixed(1)} km from Ithaca`);
  }
  if (bad.length > 0) throw new Error(`demo seed: places not on land or too far:\n${bad.join("\n")}`);
}

interface Town {
  name: string;
  centre: LatLng; // on land; checked below like every yard
  zip: string;
  jitterKm: number;
}

const TOWNS: Record<string, Town> = Object.fromEntries(
  (
    [
      ["Ithaca", 42.433, -76.487, "14850", 1.0],
      ["Dryden", 42.4906, -76.2974, "13053", 1.5],
      ["Groton", 42.5876, -76.3666, "13073", 1.5],
      ["Lansing", 42.56, -76.45, "14882", 1.5],
      ["Freeville", 42.5123, -76.346, "13068", 1.2],
      ["Newfield", 42.3623, -76.5916, "14867", 1.5],
      ["Spencer", 42.214, -76.4958, "14883", 1.5],
      ["Candor", 42.2298, -76.338, "13743", 1.5],
      ["Owego", 42.116, -76.263, "13827", 1.0],
      ["Cortland", 42.6012, -76.1805, "13045", 1.2],
      ["Homer", 42.637, -76.1788, "13077", 1.2],
      ["Interlaken", 42.6184, -76.7241, "14847", 1.2],
      ["Ovid", 42.6762, -76.823, "14521", 1.2],
      ["Watkins Glen", 42.368, -76.88, "14891", 1.0],
      ["Brooktondale", 42.3801, -76.3963, "14817", 1.5],
      ["Danby", 42.3529, -76.4844, "14850", 1.5],
      ["Caroline", 42.365, -76.33, "14817", 1.5],
      ["Enfield", 42.43, -76.625, "14850", 1.2],
      ["Moravia", 42.7126, -76.4216, "13118", 1.2],
      ["McLean", 42.553, -76.294, "13102", 1.2],
      ["Etna", 42.487, -76.384, "13062", 1.0],
      ["Varna", 42.4554, -76.4383, "14850", 1.0],
      ["Mecklenburg", 42.457, -76.713, "14863", 1.0],
    ] as const
  ).map(([name, lat, lng, zip, jitterKm]) => [name, { name, centre: { lat, lng }, zip, jitterKm }]),
);

function town(name: string): Town {
  const t = TOWNS[name];
  if (!t) throw new Error(`demo seed: unknown town ${name}`);
  return t;
}

/** A point at most `town.jitterKm` (≤ 1.5 km) from the town centre, redrawn if it falls in a lake. */
function pointNear(rng: Rng, t: Town): LatLng {
  const maxKm = Math.min(1.5, t.jitterKm);
  for (let attempt = 0; attempt < 100; attempt++) {
    const r = maxKm * Math.sqrt(rng.float());
    const theta = rng.float() * 2 * Math.PI;
    const lat = t.centre.lat + (r * Math.cos(theta)) / 111.32;
    const lng = t.centre.lng + (r * Math.sin(theta)) / (111.32 * Math.cos((t.centre.lat * Math.PI) / 180));
    const p = { lat: Number(lat.toFixed(6)), lng: Number(lng.toFixed(6)) };
    if (!lakeAt(p)) return p;
  }
  throw new Error(`demo seed: no land found near ${t.name}`);
}

// ---------------------------------------------------------------- invented people

const STREETS = [
  "Bluebell Hollow Rd", "Cider Press Ln", "Foxglove Hill Rd", "Skep Hollow Rd", "Drumlin View Rd",
  "Hemlock Ridge Rd", "Old Creamery Rd", "Clover Lot Rd", "Lindenwood Ln", "Tansy Hill Rd",
  "Kestrel Ridge Rd", "Wildflower Ln", "Saltbox Rd", "Thimbleberry Ln", "Stonewall Ln",
  "Honeylocust Rd", "Orchard Terrace", "Millrace Rd", "Quarry Hollow Rd", "Larkspur Ln",
];

// name, home town, towns of further yards, has a sign-in, notes
const CUSTOMER_SPECS: ReadonlyArray<readonly [string, string, readonly string[], boolean, string | null]> = [
  ["Juniper Ashgrove", "Dryden", ["Freeville", "Etna"], true, "Demo customer: three yards."],
  ["Bartholomew Quillfeather", "Ithaca", ["Varna"], true, null],
  ["Clementine Hollowell", "Groton", ["Groton"], true, "Prefers a text message the evening before."],
  ["Ezra Thistlewood", "Lansing", ["Lansing"], false, "Pays by cheque."],
  ["Marguerite Pennywhistle", "Newfield", ["Newfield"], true, null],
  ["Rufus Kettleby", "Cortland", ["Homer"], true, "Wants every wash count e-mailed."],
  ["Anneliese Brambleton", "Interlaken", ["Ovid"], false, null],
  ["Theodora Wickmere", "Watkins Glen", ["Mecklenburg"], true, null],
  ["Silas Larkhaven", "Candor", ["Spencer"], false, "Landline only; call after 6 pm."],
  ["Philippa Moorcroft", "Owego", ["Owego"], true, null],
  ["Caspar Dunwiddie", "Brooktondale", ["Caroline"], true, null],
  ["Rosalind Applegarth", "Danby", ["Danby"], false, null],
  ["Fitzroy Honeysett", "Moravia", ["Moravia"], true, "Second yard is on a neighbour's farm."],
  ["Eudora Pickwell", "Dryden", ["McLean"], true, null],
  ["Ottoline Feathergill", "Enfield", [], true, null],
  ["Lucius Mossbridge", "Enfield", [], false, null],
  ["Winifred Oakenshaw", "Ithaca", [], true, null],
  ["Desmond Pilkerton", "Ithaca", [], false, "Pays cash to the crew."],
  ["Hyacinth Rookwood", "Ithaca", [], true, null],
  ["Percival Hartsease", "Dryden", [], true, null],
  ["Imogen Vantreece", "Dryden", [], false, null],
  ["Ignatius Bellweather", "Groton", [], true, null],
  ["Cordelia Fairbrook", "Lansing", [], true, null],
  ["Amos Thornquist", "Freeville", [], false, null],
  ["Delphine Marchbank", "Newfield", [], true, null],
  ["Horatio Fenlow", "Spencer", [], false, null],
  ["Beatrix Cloverdale", "Candor", [], true, null],
  ["Cloverhill Youth Bee Club", "Cortland", [], true, "Club apiary; invoices to the treasurer, Leopold Wendemuth."],
  ["Georgiana Pellworth", "Cortland", [], false, null],
  ["Alistair Crumbeck", "Homer", [], true, null],
  ["Mirabel Sedgewick", "Interlaken", [], false, null],
  ["Hazelrigg Hill Orchard", "Ovid", [], true, "Pollination yard behind the cider barn; contact Cornelius Hazelrigg."],
  ["Tabitha Quarrington", "Watkins Glen", [], true, null],
  ["Ambrose Elderkin", "Brooktondale", [], false, null],
  ["Perpetua Gorsedale", "Caroline", [], true, null],
];

const EXTRA_YARD_NAMES = ["Orchard yard", "Back field", "Hilltop yard", "Creek yard", "Pasture yard", "Woodlot yard", "Sugarbush yard"];

const ACCESS_NOTES: ReadonlyArray<(rng: Rng) => string> = [
  (r) => `Gate code ${r.int(1000, 9999)}#. Close the gate behind you — sheep in the lower field.`,
  () => "Two friendly dogs loose in the yard; ring the bell and wait. Park on the gravel by the red barn.",
  (r) => `Hives along the hedgerow ${r.int(4, 15) * 10} m past the pond. Ground soft after rain — park at the road.`,
  () => "Electric bear fence around the hives: the switch is on the post by the shed. Switch it back on when leaving.",
  (r) => `Text the owner 30 min before arriving (607-555-01${String(r.int(0, 99)).padStart(2, "0")}). Steep track, 4WD in wet weather.`,
  () => "Shared driveway with the neighbour — don't block it. Hives behind the greenhouse.",
  (r) => `Padlock on the field gate, combination ${r.int(0, 9)}-${r.int(0, 9)}-${r.int(0, 9)}-${r.int(0, 9)}. Cattle in the next pasture; stay on the track.`,
  () => "Park in the church lot across the road; the hives are a three-minute walk up the mown path.",
  () => "Owner's dog is nervous of strangers; the owner shuts her in before the crew arrives.",
  () => "Turn in at the mailbox painted with sunflowers; hives in the old orchard on the left.",
  (r) => `Key safe by the back door, code ${r.int(1000, 9999)}; the key opens the shed where spare entrance reducers are.`,
  () => "No vehicles on the lawn; park on the road shoulder and carry the kit.",
  () => "Hives 200 m into the woods; take the wheelbarrow path from the barn.",
  () => "Hives on a pallet stand by the vegetable garden. Watch for the low clothesline.",
];

const COLONY_NOTES = [
  "Nuc from a July split.",
  "Top entrance: close it as well before dosing.",
  "Screened bottom board: slide the insert in before dosing.",
  "Wrapped for winter; lift the wrap at the entrance only.",
  "Polystyrene hive body.",
  "Queen marked blue (2025).",
];

const WEATHER_NOTES = [
  "4 °C, overcast, calm.", "7 °C, light wind from the west.", "2 °C, frost clearing, sunny.",
  "9 °C, drizzle at times.", "5 °C, cloudy, bees clustered.", "11 °C, bright; a few bees flying.",
  "1 °C, light snow, calm.", "6 °C, breezy, dry.",
];

const BOOKING_NOTES = [
  "Please do the two nucs by the shed first.",
  "Supers are off; entrance reducers are in.",
  "Customer would like to watch from a distance.",
  "Park at the top of the drive please.",
  "Two colonies are in a top-bar hive; call if that is a problem.",
];

// ---------------------------------------------------------------- plan types

type Role = "customer" | "crew" | "dispatcher" | "office" | "owner";
type Brood = "brood" | "broodless" | "unknown";
type Pref = "any" | "morning" | "afternoon";
type Category = "completed" | "in_progress" | "past_cancelled" | "upcoming" | "requested" | "upcoming_cancelled" | "none";

interface DemoUser {
  email: string;
  name: string;
  role: Role;
  phone: string | null;
  licence: string | null;
  createdAt: Date;
  id?: number;
}
interface DemoCustomer {
  name: string;
  email: string;
  phone: string;
  addressLine: string;
  town: Town;
  notes: string | null;
  user: DemoUser | null;
  createdAt: Date;
  yards: DemoYard[];
  id?: number;
}
interface DemoColony {
  label: string;
  broodBoxes: number;
  boxType: BoxType;
  brood: Brood;
  active: boolean;
  notes: string | null;
  deactivatedAt?: Date;
  id?: number;
}
interface DemoYard {
  customer: DemoCustomer;
  name: string;
  town: Town;
  point: LatLng;
  address: string;
  access: string;
  colonyCount: number;
  boxes: number;
  boxType: BoxType;
  brood: Brood;
  supersOff: boolean;
  colonies: DemoColony[];
  category: Category;
  id?: number;
}
interface DemoCrew {
  name: string;
  startLabel: string;
  start: LatLng;
  /** Working hours, minutes after midnight. */
  workStartMin: number;
  workEndMin: number;
  vaporizers: number;
  /** ISO weekdays worked (1 = Monday … 7 = Sunday). */
  workingWeekdays: number[];
  /** Daily limits (null: none). */
  maxColoniesPerDay: number | null;
  maxDoseGramsPerDay: number | null;
  members: DemoUser[];
  id?: number;
}
interface DemoBooking {
  yard: DemoYard;
  date: string;
  pref: Pref;
  colonies: number;
  status: "requested" | "confirmed" | "cancelled" | "completed";
  notes: string | null;
  createdBy: DemoUser;
  createdAt: Date;
  cancelledAt: Date | null;
  cancelReason: string | null;
  course: DemoCourse | null;
  id?: number;
}
interface DemoCourse {
  booking: DemoBooking;
  brood: Brood;
  rounds: number;
  interval: number;
  status: "active" | "complete" | "cancelled";
  visits: DemoVisit[];
  id?: number;
}
interface DemoTally {
  colony: DemoColony;
  outcome: "treated" | "skipped";
  skipReason: string | null;
  skipNote: string | null;
  broodBoxes: number;
  /** The box type the dose was worked out for. */
  boxType: BoxType;
  doseGrams: number;
  mites: number | null;
  beesSampled: number | null;
  notes: string | null;
  recordedBy: DemoUser;
  recordedAt: Date;
}
interface DemoVisit {
  course: DemoCourse;
  yard: DemoYard;
  round: number;
  date: string;
  pref: Pref;
  status: "scheduled" | "done" | "cancelled";
  coloniesExpected: number;
  stop: DemoStop | null;
  startedAt: Date | null;
  finishedAt: Date | null;
  finishedBy: DemoUser | null;
  weather: string | null;
  notes: string | null;
  tallies: DemoTally[];
  invoice: DemoInvoice | null;
  id?: number;
}
interface DemoRun {
  crew: DemoCrew;
  date: string;
  status: "published" | "done";
  stops: DemoStop[];
  driveSeconds: number;
  driveMeters: number;
  publishedAt: Date;
  safetyCheckedAt: Date | null;
  id?: number;
}
interface DemoStop {
  run: DemoRun;
  visit: DemoVisit;
  position: number;
  arriveAt: Date;
  startAt: Date;
  leaveAt: Date;
  driveSeconds: number;
  driveMeters: number;
}
interface DemoLine {
  kind: "colony" | "trip_fee" | "minimum";
  description: string;
  quantity: number;
  unitCents: number;
  amountCents: number;
}
interface DemoPayment {
  amountCents: number;
  method: "card" | "cash" | "cheque";
  receivedAt: Date;
  reference: string;
  recordedBy: DemoUser | null;
  refund: { amountCents: number; reason: string; createdBy: DemoUser; createdAt: Date } | null;
  id?: number;
}
interface DemoInvoice {
  visit: DemoVisit;
  customer: DemoCustomer;
  year: number;
  sequence: number;
  number: string;
  status: "open" | "paid" | "void" | "refunded";
  issuedOn: string;
  dueOn: string;
  lines: DemoLine[];
  subtotal: number;
  tax: number;
  total: number;
  voidReason: string | null;
  sentAt: Date;
  remindedAt: Date | null;
  payment: DemoPayment | null;
  id?: number;
}

// ---------------------------------------------------------------- route timing

interface PlannedStop {
  visit: DemoVisit;
  arrive: number;
  start: number;
  leave: number;
  driveSeconds: number;
  driveMeters: number;
}
interface CrewDayPlan {
  crew: DemoCrew;
  stops: PlannedStop[];
  end: number;
  driveSeconds: number;
  driveMeters: number;
  fits: boolean;
}

/**
 * Nearest-neighbour order (morning wishes first, afternoon last), timed with the app's rules
 * (seeds/demo-timing.ts) from the crew's start of work. `dayCrews` are the crews of the day,
 * whose working hours set the time windows.
 */
export function planCrewDay(crew: DemoCrew, visits: readonly DemoVisit[], dayCrews: readonly DemoCrew[]): CrewDayPlan {
  const order: DemoVisit[] = [];
  let here = crew.start;
  for (const pref of ["morning", "any", "afternoon"] as const) {
    const rest = visits.filter((v) => v.pref === pref);
    while (rest.length > 0) {
      let best = 0;
      for (let i = 1; i < rest.length; i++) {
        if (haversineKilometres(here, rest[i].yard.point) < haversineKilometres(here, rest[best].yard.point)) best = i;
      }
      const [next] = rest.splice(best, 1);
      order.push(next);
      here = next.yard.point;
    }
  }
  const timed = timeDemoRun(
    crew,
    order.map((v) => ({
      point: v.yard.point,
      pref: v.pref,
      bookedAt: v.course.booking.createdAt,
      colonies: v.coloniesExpected,
      broodBoxesPerColony: v.yard.boxes,
      boxType: v.yard.boxType,
    })),
    dayCrews,
    DEMO_SETTINGS,
  );
  return {
    crew,
    stops: timed.stops.map((s, i) => ({ visit: order[i], ...s })),
    end: timed.end,
    driveSeconds: timed.driveSeconds,
    driveMeters: timed.driveMeters,
    fits: timed.fits,
  };
}

/** Splits one past service day between the crews so every visit fits in working hours. */
function planServiceDay(date: string, visits: readonly DemoVisit[], crews: readonly DemoCrew[]): CrewDayPlan[] {
  const singles = crews.map((c) => planCrewDay(c, visits, crews)).filter((p) => p.fits);
  const comfortable = singles.filter((p) => p.end <= hm(14));
  if (comfortable.length > 0) {
    return [comfortable.reduce((a, b) => (b.driveSeconds < a.driveSeconds ? b : a))];
  }
  if (visits.length <= 3 && singles.length > 0) {
    return [singles.reduce((a, b) => (b.driveSeconds < a.driveSeconds ? b : a))];
  }
  const bearing = (v: DemoVisit) =>
    Math.atan2((v.yard.point.lng - ITHACA.lng) * Math.cos((ITHACA.lat * Math.PI) / 180), v.yard.point.lat - ITHACA.lat);
  const sorted = [...visits].sort((a, b) => bearing(a) - bearing(b));
  let best: { plans: CrewDayPlan[]; score: number } | null = null;
  const n = sorted.length;
  for (let r = 0; r < n; r++) {
    const rotated = [...sorted.slice(r), ...sorted.slice(0, r)];
    for (let k = 1; k < n; k++) {
      const a = rotated.slice(0, k);
      const b = rotated.slice(k);
      for (const [ca, cb] of [[crews[0], crews[1]], [crews[1], crews[0]]] as const) {
        const pa = planCrewDay(ca, a, crews);
        const pb = planCrewDay(cb, b, crews);
        if (!pa.fits || !pb.fits) continue;
        const lonelyStop = (pa.stops.length === 1 ? 3600 : 0) + (pb.stops.length === 1 ? 3600 : 0);
        const score = Math.max(pa.end, pb.end) + (pa.driveSeconds + pb.driveSeconds) / 2 + lonelyStop;
        if (!best || score < best.score) best = { plans: [pa, pb], score };
      }
    }
  }
  if (best) return best.plans;
  if (singles.length > 0) return [singles[0]];
  throw new Error(`demo seed: the ${visits.length} visits of ${date} do not fit in two crew-days`);
}

// ---------------------------------------------------------------- money

function dollars(cents: number): string {
  return `$${(cents / 100).toFixed(2)}`;
}

// ---------------------------------------------------------------- the plan

export interface DemoPlan {
  today: string;
  users: DemoUser[];
  customers: DemoCustomer[];
  yards: DemoYard[];
  crews: DemoCrew[];
  bookings: DemoBooking[];
  visits: DemoVisit[];
  runs: DemoRun[];
  invoices: DemoInvoice[];
  staff: { owner: DemoUser; dispatcher: DemoUser; office: DemoUser };
}

export function buildDemoPlan(today: string): DemoPlan {
  parseDay(today);
  const places = new Rng(20261201);
  const sched = new Rng(77);
  const money = new Rng(4242);
  const seasonStart = addDays(today, -63); // nine weeks of autumn rounds before today
  const at = (day: string, h: number, m = 0) => localTime(day, hm(h, m));
  let phoneSerial = 0;
  const phone = () => `607-555-01${String(phoneSerial++ % 100).padStart(2, "0")}`;

  // Staff ---------------------------------------------------------
  const staffSince = at(addDays(today, -400), 9);
  const mkUser = (email: string, name: string, role: Role, licence: string | null = null): DemoUser => ({
    email, name, role, phone: phone(), licence, createdAt: staffSince,
  });
  const owner = mkUser(DEMO_SIGN_INS.owner, "Marisol Quenby", "owner");
  const dispatcher = mkUser(DEMO_SIGN_INS.dispatcher, "Desmond Alderwick", "dispatcher");
  const office = mkUser(DEMO_SIGN_INS.office, "Opal Tennyfield", "office");
  const crewUsers = [
    mkUser(DEMO_SIGN_INS.crew, "Tobiah Fernleigh", "crew", "DEMO-NY-CA-40117"),
    mkUser("wren.castellow@demo.varroute.test", "Wren Castellow", "crew", "DEMO-NY-CA-40982"),
    mkUser("ines.marrowby@demo.varroute.test", "Ines Marrowby", "crew", "DEMO-NY-CA-41305"),
    mkUser("caspian.oakridge@demo.varroute.test", "Caspian Oakridge", "crew", "DEMO-NY-CA-41876"),
  ];
  const users: DemoUser[] = [owner, dispatcher, office, ...crewUsers];

  const crews: DemoCrew[] = [
    {
      name: "Crew 1",
      startLabel: `${DEMO_BUSINESS_NAME} shop, 12 Kiln Lane, Ithaca`,
      start: { lat: 42.428, lng: -76.478 },
      workStartMin: 8 * 60,
      workEndMin: 17 * 60,
      vaporizers: 2,
      // The owner's own crew also takes Saturdays in the short treatment season.
      workingWeekdays: [1, 2, 3, 4, 5, 6],
      maxColoniesPerDay: null,
      maxDoseGramsPerDay: null,
      members: [crewUsers[0], crewUsers[1]],
    },
    {
      name: "Crew 2",
      startLabel: `${DEMO_BUSINESS_NAME} lock-up, 5 Mill Pond Rd, Dryden`,
      start: { lat: 42.486, lng: -76.301 },
      workStartMin: 8 * 60,
      workEndMin: 17 * 60,
      vaporizers: 1,
      // Weekdays only, and no more colonies than one vaporizer's crew works through in a long
      // day (a generous ceiling: the working hours bind first).
      workingWeekdays: [1, 2, 3, 4, 5],
      maxColoniesPerDay: 60,
      maxDoseGramsPerDay: null,
      members: [crewUsers[2], crewUsers[3]],
    },
  ];

  // Customers and yards -------------------------------------------
  const customers: DemoCustomer[] = [];
  const yards: DemoYard[] = [];
  CUSTOMER_SPECS.forEach(([name, homeTown, extraTowns, hasAccount, notes], index) => {
    const isDemo = index === 0;
    const isOrg = /Club|Orchard/.test(name);
    const slug = name.toLowerCase().replace(/[^a-z]+/g, ".").replace(/^\.|\.$/g, "");
    const email = isDemo ? DEMO_SIGN_INS.customer : `${slug}@${isOrg ? "example.org" : "example.com"}`;
    const street = places.pick(STREETS);
    const home = town(homeTown);
    const createdAt = at(addDays(today, -places.int(90, 700)), places.int(8, 20), places.int(0, 59));
    const customer: DemoCustomer = {
      name,
      email,
      phone: phone(),
      addressLine: `${places.int(12, 2480)} ${street}`,
      town: home,
      notes,
      user: null,
      createdAt,
      yards: [],
    };
    if (hasAccount) {
      customer.user = { email, name, role: "customer", phone: customer.phone, licence: null, createdAt };
      users.push(customer.user);
    }
    const yardNames = places.shuffle(EXTRA_YARD_NAMES);
    [homeTown, ...extraTowns].forEach((townName, i) => {
      const t = town(townName);
      const colonyCount =
        name === "Hazelrigg Hill Orchard" ? 24
        : name === "Cloverhill Youth Bee Club" ? 16
        : name === "Rufus Kettleby" && i === 1 ? 12
        : name === "Ottoline Feathergill" ? 1
        : places.weighted([[1, 2], [2, 8], [3, 10], [4, 10], [5, 8], [6, 7], [7, 4], [8, 4], [9, 2], [10, 2], [11, 1]] as const);
      const boxes = places.chance(0.62) ? 2 : 1;
      const brood = places.weighted([["brood", 45], ["broodless", 35], ["unknown", 20]] as const);
      const yard: DemoYard = {
        customer,
        name: i === 0 ? (isOrg ? "Club apiary" : "Home yard") : yardNames[i - 1],
        town: t,
        point: pointNear(places, t),
        address:
          i === 0 || t === home
            ? `${i === 0 ? customer.addressLine : `Lane off ${street}`}, ${t.name}, NY ${t.zip}`
            : `${places.int(12, 2480)} ${places.pick(STREETS)}, ${t.name}, NY ${t.zip}`,
        access: places.chance(0.9) ? places.pick(ACCESS_NOTES)(places) : "",
        colonyCount,
        boxes,
        // Every demo yard keeps deep brood boxes, the box the label's rate is given for.
        boxType: "deep",
        brood,
        supersOff: places.chance(0.86),
        colonies: [],
        category: "none",
      };
      for (let c = 1; c <= colonyCount; c++) {
        const odd = places.chance(0.12);
        yard.colonies.push({
          label: `H${c}`,
          broodBoxes: odd ? 3 - boxes : boxes,
          boxType: yard.boxType,
          brood: brood !== "unknown" && places.chance(0.1) ? (brood === "brood" ? "broodless" : "brood") : brood,
          active: true,
          notes: places.chance(0.15) ? places.pick(COLONY_NOTES) : null,
        });
      }
      customer.yards.push(yard);
      yards.push(yard);
    });
    customers.push(customer);
  });

  // The demo customer's three yards: one finished course, one under way, one to come.
  const [demoHome, demoSecond, demoThird] = customers[0].yards;
  demoHome.brood = "brood";
  demoSecond.brood = "brood";
  demoHome.category = "completed";
  demoSecond.category = "in_progress";
  demoThird.category = "upcoming";

  // Categories for everyone else, from a shuffled list.
  {
    const counts: Array<[Category, number]> = [
      ["in_progress", 5],
      ["completed", 20],
      ["past_cancelled", 2],
      ["upcoming", 14],
      ["requested", 3],
      ["upcoming_cancelled", 1],
    ];
    let pool = sched.shuffle(yards.filter((y) => y.category === "none"));
    for (const [category, count] of counts) {
      const chosen =
        category === "in_progress"
          ? pool.filter((y) => y.brood !== "broodless").slice(0, count)
          : pool.slice(0, count);
      for (const y of chosen) y.category = category;
      pool = pool.filter((y) => !chosen.includes(y));
    }
  }

  // Bookings, courses, visits -----------------------------------------
  const bookings: DemoBooking[] = [];
  const visits: DemoVisit[] = [];
  const visitLoad = new Map<string, number>();
  const load = (d: string) => visitLoad.get(d) ?? 0;
  const pastDays = daysFromTo(seasonStart, addDays(today, -1)).filter((d) => [2, 4].includes(dayOfWeek(d)));
  const roundsFor = (brood: Brood) => (brood === "broodless" ? 1 : 3);

  // Aim for about DAY_TARGET visits per service day: join a day that has room before
  // opening an empty one, and avoid going past the target, so the past runs look like
  // real crew-days rather than one or two stops each.
  const DAY_TARGET = 5;
  const pickDay = (candidates: string[], rounds: number): string => {
    if (candidates.length === 0) throw new Error("demo seed: no candidate day");
    let best = candidates[0];
    let bestCost = Infinity;
    for (const d of sched.shuffle(candidates)) {
      let cost = 0;
      for (let r = 0; r < rounds; r++) {
        const l = load(addDays(d, 7 * r));
        cost += l >= DAY_TARGET ? 10 * (l + 1 - DAY_TARGET) : -l;
      }
      if (cost < bestCost) {
        best = d;
        bestCost = cost;
      }
    }
    return best;
  };

  const bookerFor = (c: DemoCustomer) => (c.user && sched.chance(0.75) ? c.user : sched.chance(0.7) ? office : dispatcher);
  const prefFor = () => sched.weighted([["any", 75], ["morning", 15], ["afternoon", 10]] as const);

  const makeBooking = (
    yard: DemoYard,
    date: string,
    status: DemoBooking["status"],
    withCourse: DemoCourse["status"] | null,
  ): DemoBooking => {
    const createdDay = addDays(date, -sched.int(6, 20));
    const createdOn = createdDay < today ? createdDay : addDays(today, -sched.int(1, 5));
    const booking: DemoBooking = {
      yard,
      date,
      pref: prefFor(),
      colonies: yard.colonyCount,
      status,
      notes: sched.chance(0.2) ? sched.pick(BOOKING_NOTES) : null,
      createdBy: bookerFor(yard.customer),
      createdAt: at(createdOn, sched.int(8, 21), sched.int(0, 59)),
      cancelledAt: null,
      cancelReason: null,
      course: null,
    };
    bookings.push(booking);
    if (withCourse) {
      const rounds = roundsFor(yard.brood);
      const course: DemoCourse = { booking, brood: yard.brood, rounds, interval: rounds > 1 ? 7 : 0, status: withCourse, visits: [] };
      booking.course = course;
      for (let r = 1; r <= rounds; r++) {
        const d = addDays(date, 7 * (r - 1));
        const visit: DemoVisit = {
          course,
          yard,
          round: r,
          date: d,
          pref: booking.pref,
          status: withCourse === "cancelled" ? "cancelled" : d < today ? "done" : "scheduled",
          coloniesExpected: yard.colonyCount,
          stop: null,
          startedAt: null,
          finishedAt: null,
          finishedBy: null,
          weather: null,
          notes: null,
          tallies: [],
          invoice: null,
        };
        course.visits.push(visit);
        visits.push(visit);
        if (visit.status !== "cancelled") visitLoad.set(d, load(d) + 1);
      }
    }
    return booking;
  };

  const byCategory = (c: Category) => yards.filter((y) => y.category === c);

  // Finished courses: three-round courses start by today − 15; single rounds late in the season.
  const completed = byCategory("completed");
  const multiDays = pastDays.filter((d) => d <= addDays(today, -15));
  const lateDays = pastDays.filter((d) => d >= addDays(today, -35));
  // Three-round courses are spread over the early, middle and late thirds of the season.
  const multi = completed.filter((y) => y.brood !== "broodless");
  multi.forEach((yard, i) => {
    const third = Math.floor((i * 3) / multi.length);
    const days = multiDays.filter((_, j) => Math.floor((j * 3) / multiDays.length) === third);
    makeBooking(yard, pickDay(days.length > 0 ? days : multiDays, 3), "completed", "complete");
  });
  for (const yard of completed.filter((y) => y.brood === "broodless")) {
    makeBooking(yard, pickDay(lateDays, 1), "completed", "complete");
  }
  // Courses under way: first round within the last two weeks, later rounds today or after.
  const recentDays = pastDays.filter((d) => d >= addDays(today, -14));
  for (const yard of byCategory("in_progress")) makeBooking(yard, pickDay(recentDays, 3), "confirmed", "active");
  // Cancelled this season: one before confirmation (no course), one after.
  byCategory("past_cancelled").forEach((yard, i) => {
    const b = makeBooking(yard, sched.pick(pastDays), "cancelled", i === 0 ? null : "cancelled");
    b.cancelledAt = at(addDays(b.date, -sched.int(2, 4)), 18, 12);
    if (b.cancelledAt <= b.createdAt) b.createdAt = at(addDays(b.date, -10), 11);
    b.cancelReason = i === 0 ? "Colonies sold to a neighbour before the visit." : "Customer treated with a strip product instead.";
  });

  // Upcoming: today and the next working day (crew 1 has published runs), then two busy
  // days a week out that need both crews, left unrouted for the dispatcher.
  const n1 = nextWorkingDay(today);
  const b1 = workingDayOnOrAfter(addDays(today, 7));
  let b2 = workingDayOnOrAfter(addDays(n1, 7));
  if (b2 === b1) b2 = nextWorkingDay(b1);
  const upcoming = byCategory("upcoming");
  const nearShop = [...upcoming.filter((y) => y !== demoThird)]
    .filter((y) => y.colonyCount <= 10)
    .sort((a, b) => haversineKilometres(crews[0].start, a.point) - haversineKilometres(crews[0].start, b.point));
  // New bookings fill today and the next working day up to about five visits each
  // (follow-up rounds of courses under way are already there).
  const todayCount = Math.max(1, DAY_TARGET - load(today));
  const todayYards = nearShop.slice(0, todayCount);
  const n1Yards = [demoThird, ...nearShop.slice(todayCount, todayCount + Math.max(1, DAY_TARGET - 1 - load(n1)))];
  const rest = upcoming.filter((y) => !todayYards.includes(y) && !n1Yards.includes(y));
  for (const y of todayYards) makeBooking(y, today, "confirmed", "active");
  for (const y of n1Yards) makeBooking(y, n1, "confirmed", "active");
  rest.forEach((y, i) => makeBooking(y, i % 5 === 4 ? b2 : b1, "confirmed", "active"));
  const laterDays = daysFromTo(addDays(today, 9), addDays(today, 20)).filter(isWorkingDay);
  for (const y of byCategory("requested")) {
    const b = makeBooking(y, sched.pick(laterDays), "requested", null);
    b.createdBy = y.customer.user ?? office;
    b.createdAt = at(addDays(today, -sched.int(1, 3)), sched.int(7, 22), sched.int(0, 59));
  }
  for (const y of byCategory("upcoming_cancelled")) {
    const b = makeBooking(y, sched.pick(laterDays), "cancelled", "cancelled");
    b.createdAt = at(addDays(today, -12), 10, 5);
    b.cancelledAt = at(addDays(today, -2), 19, 40);
    b.cancelReason = "Customer is moving the hives to a new site; will rebook.";
  }

  // Runs ----------------------------------------------------------------
  const runs: DemoRun[] = [];
  const makeRun = (plan: CrewDayPlan, date: string, status: DemoRun["status"]) => {
    const run: DemoRun = {
      crew: plan.crew,
      date,
      status,
      stops: [],
      driveSeconds: plan.driveSeconds,
      driveMeters: plan.driveMeters,
      publishedAt: status === "done" ? at(previousWorkingDay(date), 15, 30) : at(addDays(today, -1), 16, 5),
      safetyCheckedAt: status === "done" ? at(date, 7, 45) : null,
    };
    plan.stops.forEach((s, position) => {
      const stop: DemoStop = {
        run,
        visit: s.visit,
        position,
        arriveAt: localTime(date, s.arrive),
        startAt: localTime(date, s.start),
        leaveAt: localTime(date, s.leave),
        driveSeconds: s.driveSeconds,
        driveMeters: s.driveMeters,
      };
      s.visit.stop = stop;
      run.stops.push(stop);
    });
    runs.push(run);
  };
  const activeVisitsOn = (d: string) => visits.filter((v) => v.date === d && v.status !== "cancelled");
  const serviceDates = [...new Set(visits.filter((v) => v.status === "done").map((v) => v.date))].sort();
  for (const d of serviceDates) {
    for (const plan of planServiceDay(d, activeVisitsOn(d), crews)) makeRun(plan, d, "done");
  }
  for (const d of [today, n1]) {
    const dayVisits = activeVisitsOn(d).sort((a, b) => a.coloniesExpected - b.coloniesExpected);
    let plan = planCrewDay(crews[0], dayVisits, crews);
    while (!plan.fits && dayVisits.length > 1) {
      dayVisits.pop(); // the largest yards stay unrouted for the dispatcher
      plan = planCrewDay(crews[0], dayVisits, crews);
    }
    if (plan.fits && plan.stops.length > 0) makeRun(plan, d, "published");
  }

  // What the crews did at each finished visit ------------------------------
  const deadOutCandidates = completed.filter((y) => roundsFor(y.brood) === 3 && y.colonyCount >= 4 && y !== demoHome);
  const deadOutYard = deadOutCandidates.length > 0 ? deadOutCandidates[0] : null;
  for (const visit of visits.filter((v) => v.status === "done")) {
    const stop = visit.stop;
    if (!stop) throw new Error(`demo seed: finished visit on ${visit.date} has no stop`);
    const [lead, second] = stop.run.crew.members;
    const started = new Date(stop.startAt.getTime() + sched.int(0, 4) * 60_000);
    const planned = stop.leaveAt.getTime() - stop.startAt.getTime();
    const finished = new Date(started.getTime() + Math.max(600_000, planned + sched.int(-3, 6) * 60_000));
    visit.startedAt = started;
    visit.finishedAt = finished;
    visit.finishedBy = lead;
    visit.weather = sched.pick(WEATHER_NOTES);
    const isFirst = visit.round === 1;
    const isLast = visit.round === visit.course.rounds;
    const washLabels = new Set(
      isFirst || isLast ? [visit.yard.colonies[0]?.label, visit.yard.colonies[Math.floor(visit.yard.colonies.length / 2)]?.label] : [],
    );
    let supersSkipped = 0;
    const perColony = (finished.getTime() - started.getTime()) / (visit.yard.colonies.length + 1);
    visit.yard.colonies.forEach((colony, i) => {
      const tally: DemoTally = {
        colony,
        outcome: "treated",
        skipReason: null,
        skipNote: null,
        broodBoxes: colony.broodBoxes,
        boxType: colony.boxType,
        doseGrams: doseGramsForColonyOfType(colony.broodBoxes, colony.boxType, DEMO_SETTINGS),
        mites: null,
        beesSampled: null,
        notes: null,
        recordedBy: i % 2 === 0 ? lead : second,
        recordedAt: new Date(started.getTime() + Math.round((i + 1) * perColony)),
      };
      const skip = (reason: string, note: string | null) => {
        tally.outcome = "skipped";
        tally.skipReason = reason;
        tally.skipNote = note;
        tally.doseGrams = 0;
      };
      if (visit.yard === deadOutYard && isLast && i === visit.yard.colonies.length - 1) {
        skip("dead_out", "No cluster; dead bees head-first in the cells. Customer told by phone.");
        colony.active = false;
        colony.deactivatedAt = new Date(finished.getTime() + 15 * 60_000);
        colony.notes = `Dead out at round ${visit.round} on ${visit.date}.`;
      } else if (!visit.yard.supersOff && isFirst && supersSkipped < 2 && i < 2) {
        supersSkipped++;
        skip("supers_on", "Honey super still on; customer will take it off before the next round.");
      } else if (sched.chance(0.035)) {
        const reason = sched.pick(["queenless", "aggressive", "not_reachable", "other"] as const);
        skip(
          reason,
          {
            queenless: "Queenless and weak; customer plans to combine it.",
            aggressive: "Very defensive in the cold; left it for the next round.",
            not_reachable: "Snow drift over the entrance; could not seal it safely.",
            other: "Customer asked to skip this one (observation hive).",
          }[reason],
        );
      }
      if (tally.outcome === "treated" && washLabels.has(colony.label)) {
        tally.beesSampled = sched.int(280, 330);
        const perHundred = isFirst ? 1 + sched.float() * 5.5 : sched.float() * 1.2;
        tally.mites = Math.round((tally.beesSampled * perHundred) / 100);
        tally.notes = "Alcohol wash before dosing.";
      }
      visit.tallies.push(tally);
    });
  }
  if (deadOutYard) deadOutYard.colonyCount = deadOutYard.colonies.filter((c) => c.active).length;

  // Invoices: one per finished visit, from the tallies ------------------------
  const invoices: DemoInvoice[] = [];
  const finishedVisits = visits
    .filter((v) => v.status === "done")
    .sort((a, b) => (a.date === b.date ? a.stop!.arriveAt.getTime() - b.stop!.arriveAt.getTime() : a.date < b.date ? -1 : 1));
  const sequences = new Map<number, number>();
  for (const visit of finishedVisits) {
    const treated = visit.tallies.filter((t) => t.outcome === "treated").length;
    const draft = invoiceForVisit(
      {
        coloniesTreated: treated,
        pricePerColonyCents: DEMO_SETTINGS.pricePerColonyCents,
        tripFeeCents: DEMO_SETTINGS.tripFeeCents,
        minimumPerVisitCents: DEMO_SETTINGS.minimumPerVisitCents,
        taxRateBasisPoints: DEMO_SETTINGS.taxRateBasisPoints,
      },
      { yardName: `${visit.yard.name}, ${visit.yard.town.name}`, roundNumber: visit.round, roundsPlanned: visit.course.rounds },
    );
    const lines: DemoLine[] = draft.lines.map((l) => ({ ...l }));
    const subtotal = draft.subtotalCents;
    const tax = draft.taxCents;
    const year = Number(visit.date.slice(0, 4));
    const sequence = (sequences.get(year) ?? 0) + 1;
    sequences.set(year, sequence);
    const invoice: DemoInvoice = {
      visit,
      customer: visit.yard.customer,
      year,
      sequence,
      number: formatInvoiceNumber(year, sequence),
      status: "open",
      issuedOn: visit.date,
      dueOn: addDays(visit.date, PAYMENT_TERMS_DAYS),
      lines,
      subtotal,
      tax,
      total: subtotal + tax,
      voidReason: null,
      sentAt: at(visit.date, 19, 5),
      remindedAt: null,
      payment: null,
    };
    visit.invoice = invoice;
    invoices.push(invoice);
  }

  // States: void, refunded, overdue among the older invoices; the rest mostly paid.
  const pay = (inv: DemoInvoice, method?: DemoPayment["method"]) => {
    const m = method ?? money.weighted([["card", 60], ["cheque", 25], ["cash", 15]] as const);
    const lastDay = addDays(today, -1);
    const span = Math.max(0, Math.min(21, daysBetween(inv.issuedOn, lastDay)));
    const day = addDays(inv.issuedOn, money.int(Math.min(1, span), span));
    const receivedAt = day === inv.issuedOn ? at(day, 20, money.int(0, 50)) : at(day, money.int(9, 19), money.int(0, 59));
    inv.status = "paid";
    inv.payment = {
      amountCents: inv.total,
      method: m,
      receivedAt,
      reference:
        m === "card" ? `Card ending ${money.int(1000, 9999)}` : m === "cheque" ? `Cheque #${money.int(1001, 4999)}` : "Cash to the crew",
      recordedBy: m === "card" ? null : office,
      refund: null,
    };
  };
  const isDemoCustomer = (inv: DemoInvoice) => inv.customer === customers[0];
  const older = money.shuffle(invoices.filter((i) => i.dueOn < today && !isDemoCustomer(i)));
  const take = (n: number) => older.splice(0, n);
  const voidReasons = [
    "Owner waived the charge: introductory visit for a new customer.",
    "Crew could not seal the entrances in high wind; visit not charged.",
  ];
  take(2).forEach((inv, i) => {
    inv.status = "void";
    inv.voidReason = voidReasons[i];
  });
  const refundReasons = [
    "Goodwill refund: a vaporizer fault left two entrances unsealed; colonies re-treated at no charge.",
    "Customer had already paid the same invoice by cheque; card payment refunded.",
  ];
  take(2).forEach((inv, i) => {
    pay(inv, "card");
    inv.status = "refunded";
    const p = inv.payment!;
    const latest = at(addDays(today, -1), 17).getTime();
    const when = Math.min(p.receivedAt.getTime() + money.int(3, 9) * DAY_MS, latest);
    p.refund = {
      amountCents: inv.total,
      reason: refundReasons[i],
      createdBy: owner,
      createdAt: new Date(Math.max(when, p.receivedAt.getTime() + 3_600_000)),
    };
  });
  for (const inv of take(4)) {
    inv.status = "open";
    const remindDay = addDays(inv.dueOn, 7) < today ? addDays(inv.dueOn, 7) : inv.dueOn;
    inv.remindedAt = at(remindDay, 9, 15);
  }
  for (const inv of invoices) {
    if (inv.status !== "open" || inv.remindedAt || inv.payment) continue;
    if (isDemoCustomer(inv)) continue;
    if (inv.dueOn < today || money.chance(0.45)) pay(inv);
  }
  // The demo customer: earlier rounds paid (card, cheque), the latest ones open.
  const demoInvoices = invoices.filter(isDemoCustomer);
  demoInvoices.forEach((inv, i) => {
    if (i < Math.max(1, demoInvoices.length - 2)) pay(inv, i % 2 === 0 ? "card" : "cheque");
  });

  return { today, users, customers, yards, crews, bookings, visits, runs, invoices, staff: { owner, dispatcher, office } };
}

// ---------------------------------------------------------------- checks on the plan

export function checkPlan(plan: DemoPlan): void {
  assertDemoPlacesOnLand([
    ...plan.yards.map((y) => ({ label: `yard "${y.name}" of ${y.customer.name}`, ...y.point })),
    ...plan.crews.map((c) => ({ label: `start of ${c.name}`, ...c.start })),
  ]);
  const problems: string[] = [];
  for (const y of plan.yards) {
    if (y.colonyCount < 1 || y.colonyCount > 24) problems.push(`${y.name}: ${y.colonyCount} colonies`);
    if (haversineKilometres(y.point, y.town.centre) > 1.5001) problems.push(`${y.name}: more than 1.5 km from ${y.town.name}`);
  }
  for (const run of plan.runs) {
    let last = 0;
    for (const s of run.stops) {
      if (!(s.arriveAt <= s.startAt && s.startAt <= s.leaveAt)) problems.push(`stop times out of order on ${run.date}`);
      if (s.arriveAt.getTime() < last) problems.push(`stops overlap on ${run.date}`);
      last = s.leaveAt.getTime();
    }
    if (last > localTime(run.date, run.crew.workEndMin * 60).getTime()) {
      problems.push(`${run.crew.name} on ${run.date} ends after ${clock(run.crew.workEndMin)}`);
    }
  }
  for (const inv of plan.invoices) {
    const sum = inv.lines.reduce((s, l) => s + l.amountCents, 0);
    if (sum !== inv.subtotal || inv.total !== inv.subtotal + inv.tax) problems.push(`invoice ${inv.number} does not add up`);
  }
  const states = new Set<string>(plan.invoices.map((i) => (i.status === "open" && i.dueOn < plan.today ? "overdue" : i.status)));
  for (const s of ["open", "overdue", "paid", "void", "refunded"]) if (!states.has(s)) problems.push(`no ${s} invoice`);
  if (!plan.runs.some((r) => r.date === plan.today && r.crew === plan.crews[0])) problems.push("crew 1 has no run today");
  if (problems.length > 0) throw new Error(`demo seed: inconsistent plan:\n${problems.join("\n")}`);
}

// ---------------------------------------------------------------- writing

/** bcrypt hash with a salt drawn from the seeded PRNG, so the seed is reproducible. */
function demoHash(rng: Rng): string {
  const bytes = Array.from({ length: 16 }, () => rng.int(0, 255));
  const salt = `$2b$${String(BCRYPT_COST).padStart(2, "0")}$${bcrypt.encodeBase64(bytes, 16)}`;
  return bcrypt.hashSync(DEMO_PASSWORD, salt);
}

async function insertId(trx: Knex.Transaction, table: string, row: Record<string, unknown>): Promise<number> {
  const [inserted] = await trx(table).insert(row).returning("id");
  return Number((inserted as { id: number | string }).id);
}

async function insertMany(trx: Knex.Transaction, table: string, rows: Record<string, unknown>[]): Promise<void> {
  for (let i = 0; i < rows.length; i += 500) await trx(table).insert(rows.slice(i, i + 500));
}

function idOf(x: { id?: number }): number {
  if (x.id === undefined) throw new Error("demo seed: row used before it was inserted");
  return x.id;
}

const stamps = (at: Date) => ({ created_at: at, updated_at: at });

async function writePlan(trx: Knex.Transaction, plan: DemoPlan): Promise<void> {
  const hashes = new Rng(1001);
  const { owner, dispatcher, office } = plan.staff;
  const today = plan.today;
  const at = (day: string, h: number, m = 0) => localTime(day, hm(h, m));

  for (const u of plan.users) {
    u.id = await insertId(trx, "users", {
      email: u.email,
      password_hash: demoHash(hashes),
      role: u.role,
      name: u.name,
      phone: u.phone,
      applicator_licence: u.licence,
      ...stamps(u.createdAt),
    });
  }

  for (const c of plan.customers) {
    c.id = await insertId(trx, "customers", {
      user_id: c.user ? idOf(c.user) : null,
      name: c.name,
      email: c.email,
      phone: c.phone,
      address_line: c.addressLine,
      city: c.town.name,
      region: "NY",
      postal_code: c.town.zip,
      notes: c.notes,
      ...stamps(c.createdAt),
    });
  }

  for (const y of plan.yards) {
    y.id = await insertId(trx, "yards", {
      customer_id: idOf(y.customer),
      name: y.name,
      lat: y.point.lat,
      lng: y.point.lng,
      address: y.address,
      access_notes: y.access,
      colony_count: y.colonyCount,
      brood_boxes_per_colony: y.boxes,
      box_type: y.boxType,
      brood_status: y.brood,
      supers_off: y.supersOff,
      ...stamps(y.customer.createdAt),
    });
  }
  const colonyRows = plan.yards.flatMap((y) =>
    y.colonies.map((c) => ({
      yard_id: idOf(y),
      label: c.label,
      brood_boxes: c.broodBoxes,
      box_type: c.boxType,
      brood_status: c.brood,
      active: c.active,
      notes: c.notes,
      ...stamps(y.customer.createdAt),
    })),
  );
  const colonyIds = new Map<string, number>();
  for (let i = 0; i < colonyRows.length; i += 500) {
    const inserted: Array<{ id: number | string; yard_id: number | string; label: string }> = await trx("colonies")
      .insert(colonyRows.slice(i, i + 500))
      .returning(["id", "yard_id", "label"]);
    for (const r of inserted) colonyIds.set(`${Number(r.yard_id)}/${r.label}`, Number(r.id));
  }
  for (const y of plan.yards) for (const c of y.colonies) c.id = colonyIds.get(`${idOf(y)}/${c.label}`);

  for (const crew of plan.crews) {
    crew.id = await insertId(trx, "crews", {
      name: crew.name,
      start_label: crew.startLabel,
      start_lat: crew.start.lat,
      start_lng: crew.start.lng,
      work_start: clock(crew.workStartMin),
      work_end: clock(crew.workEndMin),
      vaporizers: crew.vaporizers,
      working_weekdays: crew.workingWeekdays,
      max_colonies_per_day: crew.maxColoniesPerDay,
      max_dose_grams_per_day: crew.maxDoseGramsPerDay,
      active: true,
      ...stamps(at(addDays(today, -400), 9)),
    });
    await insertMany(trx, "crew_members", crew.members.map((m) => ({ crew_id: idOf(crew), user_id: idOf(m) })));
  }

  for (const b of plan.bookings) {
    b.id = await insertId(trx, "bookings", {
      customer_id: idOf(b.yard.customer),
      yard_id: idOf(b.yard),
      service_date: b.date,
      time_preference: b.pref,
      colonies: b.colonies,
      status: b.status,
      notes: b.notes,
      created_by: idOf(b.createdBy),
      cancelled_at: b.cancelledAt,
      cancel_reason: b.cancelReason,
      created_at: b.createdAt,
      updated_at: b.cancelledAt ?? b.createdAt,
    });
    const course = b.course;
    if (!course) continue;
    const confirmedAt = new Date(b.createdAt.getTime() + 20 * 60_000);
    course.id = await insertId(trx, "courses", {
      yard_id: idOf(b.yard),
      booking_id: b.id,
      brood_status: course.brood,
      rounds_planned: course.rounds,
      interval_days: course.interval,
      status: course.status,
      ...stamps(confirmedAt),
    });
    for (const v of course.visits) {
      v.id = await insertId(trx, "visits", {
        course_id: course.id,
        yard_id: idOf(v.yard),
        round_number: v.round,
        service_date: v.date,
        time_preference: v.pref,
        status: v.status,
        colonies_expected: v.coloniesExpected,
        supers_confirmed_at: v.startedAt,
        supers_confirmed_by: v.finishedBy ? idOf(v.finishedBy) : null,
        started_at: v.startedAt,
        finished_at: v.finishedAt,
        finished_by: v.finishedBy ? idOf(v.finishedBy) : null,
        finish_key: v.status === "done" ? `demo-finish-${course.id}-${v.round}` : null,
        report_sent_at: v.finishedAt ? new Date(v.finishedAt.getTime() + 25 * 60_000) : null,
        weather_note: v.weather,
        notes: v.notes,
        created_at: confirmedAt,
        updated_at: v.finishedAt ?? b.cancelledAt ?? confirmedAt,
      });
    }
  }

  for (const run of plan.runs) {
    run.id = await insertId(trx, "runs", {
      crew_id: idOf(run.crew),
      service_date: run.date,
      status: run.status,
      published_at: run.publishedAt,
      published_by: idOf(dispatcher),
      safety_checked_at: run.safetyCheckedAt,
      drive_seconds: run.driveSeconds,
      drive_meters: run.driveMeters,
      version: 1,
      created_at: new Date(run.publishedAt.getTime() - 45 * 60_000),
      updated_at: run.status === "done" ? run.stops[run.stops.length - 1].leaveAt : run.publishedAt,
    });
    await insertMany(
      trx,
      "stops",
      run.stops.map((s) => ({
        run_id: run.id,
        visit_id: idOf(s.visit),
        position: s.position,
        arrive_at: s.arriveAt,
        start_at: s.startAt,
        leave_at: s.leaveAt,
        drive_seconds_from_previous: s.driveSeconds,
        drive_meters_from_previous: s.driveMeters,
        locked: false,
        ...stamps(run.publishedAt),
      })),
    );
  }

  await insertMany(
    trx,
    "tallies",
    plan.visits.flatMap((v) =>
      v.tallies.map((t) => ({
        visit_id: idOf(v),
        colony_id: idOf(t.colony),
        colony_label: t.colony.label,
        outcome: t.outcome,
        skip_reason: t.skipReason,
        skip_note: t.skipNote,
        brood_boxes: t.broodBoxes,
        box_type: t.boxType,
        dose_grams: t.doseGrams.toFixed(2),
        mites: t.mites,
        bees_sampled: t.beesSampled,
        notes: t.notes,
        recorded_by: idOf(t.recordedBy),
        recorded_at: t.recordedAt,
        ...stamps(t.recordedAt),
      })),
    ),
  );

  const lastNumbers = new Map<number, number>();
  for (const inv of plan.invoices) lastNumbers.set(inv.year, Math.max(lastNumbers.get(inv.year) ?? 0, inv.sequence));
  await insertMany(trx, "invoice_sequences", [...lastNumbers].map(([year, last]) => ({ year, last_number: last })));

  const emails: Record<string, unknown>[] = [];
  const audits: Record<string, unknown>[] = [];
  for (const inv of plan.invoices) {
    const lastChange = inv.payment?.refund?.createdAt ?? inv.payment?.receivedAt ?? inv.remindedAt ?? inv.sentAt;
    inv.id = await insertId(trx, "invoices", {
      year: inv.year,
      sequence: inv.sequence,
      number: inv.number,
      customer_id: idOf(inv.customer),
      visit_id: idOf(inv.visit),
      status: inv.status,
      issued_on: inv.issuedOn,
      due_on: inv.dueOn,
      subtotal_cents: inv.subtotal,
      tax_cents: inv.tax,
      total_cents: inv.total,
      currency: "usd",
      void_reason: inv.voidReason,
      sent_at: inv.sentAt,
      reminded_at: inv.remindedAt,
      created_at: new Date(inv.sentAt.getTime() - 10 * 60_000),
      updated_at: inv.status === "void" ? at(addDays(inv.issuedOn, 3), 10) : lastChange,
    });
    await insertMany(
      trx,
      "invoice_lines",
      inv.lines.map((l, i) => ({
        invoice_id: inv.id,
        position: i + 1,
        kind: l.kind,
        description: l.description,
        quantity: l.quantity,
        unit_cents: l.unitCents,
        amount_cents: l.amountCents,
      })),
    );
    emails.push({
      kind: "invoice",
      to_address: inv.customer.email,
      subject: `Invoice ${inv.number} from ${DEMO_BUSINESS_NAME}: ${dollars(inv.total)}`,
      customer_id: idOf(inv.customer),
      invoice_id: inv.id,
      status: "sent",
      attempts: 1,
      dedupe_key: `invoice:${inv.id}`,
      sent_at: inv.sentAt,
      ...stamps(inv.sentAt),
    });
    if (inv.remindedAt) {
      emails.push({
        kind: "invoice_reminder",
        to_address: inv.customer.email,
        subject: `Reminder: invoice ${inv.number} was due on ${inv.dueOn}`,
        customer_id: idOf(inv.customer),
        invoice_id: inv.id,
        status: "sent",
        attempts: 1,
        dedupe_key: `invoice_reminder:${inv.id}:1`,
        sent_at: inv.remindedAt,
        ...stamps(inv.remindedAt),
      });
    }
    if (inv.status === "void") {
      audits.push({
        at: at(addDays(inv.issuedOn, 3), 10),
        actor_user_id: idOf(office),
        action: "invoice.void",
        entity_type: "invoice",
        entity_id: String(inv.id),
        before: JSON.stringify({ status: "open" }),
        after: JSON.stringify({ status: "void", void_reason: inv.voidReason }),
      });
    }
    const p = inv.payment;
    if (!p) continue;
    p.id = await insertId(trx, "payments", {
      invoice_id: inv.id,
      amount_cents: p.amountCents,
      method: p.method,
      received_at: p.receivedAt,
      reference: p.reference,
      recorded_by: p.recordedBy ? idOf(p.recordedBy) : null,
      ...stamps(p.receivedAt),
    });
    emails.push({
      kind: "payment_receipt",
      to_address: inv.customer.email,
      subject: `Receipt for invoice ${inv.number}: ${dollars(p.amountCents)} received`,
      customer_id: idOf(inv.customer),
      invoice_id: inv.id,
      status: "sent",
      attempts: 1,
      dedupe_key: `payment_receipt:${p.id}`,
      sent_at: new Date(p.receivedAt.getTime() + 60_000),
      ...stamps(p.receivedAt),
    });
    if (p.refund) {
      const refundId = await insertId(trx, "refunds", {
        payment_id: p.id,
        amount_cents: p.refund.amountCents,
        reason: p.refund.reason,
        created_by: idOf(p.refund.createdBy),
        ...stamps(p.refund.createdAt),
      });
      audits.push({
        at: p.refund.createdAt,
        actor_user_id: idOf(p.refund.createdBy),
        action: "refund.create",
        entity_type: "invoice",
        entity_id: String(inv.id),
        before: JSON.stringify({ status: "paid" }),
        after: JSON.stringify({ status: "refunded", refund_id: refundId, amount_cents: p.refund.amountCents }),
      });
    }
  }

  // Confirmations and visit reports; the latest report to one customer bounced.
  const failedReport = plan.visits
    .filter((v) => v.finishedAt && v.yard.customer !== plan.customers[0])
    .reduce<DemoVisit | null>((a, v) => (a && a.finishedAt! > v.finishedAt! ? a : v), null);
  for (const b of plan.bookings) {
    if (b.status === "requested" || !b.course) continue;
    const sentAt = new Date(b.createdAt.getTime() + 21 * 60_000);
    emails.push({
      kind: "booking_confirmation",
      to_address: b.yard.customer.email,
      subject: `Booking confirmed: ${b.yard.name} on ${b.date}`,
      customer_id: idOf(b.yard.customer),
      booking_id: b.id,
      status: "sent",
      attempts: 1,
      dedupe_key: `booking_confirmation:${b.id}`,
      sent_at: sentAt,
      ...stamps(sentAt),
    });
    for (const v of b.course.visits) {
      if (!v.finishedAt) continue;
      const sent = new Date(v.finishedAt.getTime() + 25 * 60_000);
      const fail = v === failedReport;
      emails.push({
        kind: "visit_report",
        to_address: b.yard.customer.email,
        subject: `Visit report: ${b.yard.name}, round ${v.round} of ${b.course.rounds} on ${v.date}`,
        customer_id: idOf(b.yard.customer),
        booking_id: b.id,
        visit_id: idOf(v),
        status: fail ? "failed" : "sent",
        attempts: fail ? 3 : 1,
        last_error: fail ? "552 5.2.2 Mailbox full: message rejected" : null,
        dedupe_key: `visit_report:${idOf(v)}`,
        sent_at: fail ? null : sent,
        ...stamps(sent),
      });
    }
    if (b.status === "cancelled" && b.cancelledAt) {
      audits.push({
        at: b.cancelledAt,
        actor_user_id: idOf(b.createdBy),
        action: "booking.cancel",
        entity_type: "booking",
        entity_id: String(b.id),
        before: JSON.stringify({ status: "confirmed" }),
        after: JSON.stringify({ status: "cancelled", cancel_reason: b.cancelReason }),
      });
    }
  }
  for (const run of plan.runs.filter((r) => r.status === "published")) {
    audits.push({
      at: run.publishedAt,
      actor_user_id: idOf(dispatcher),
      action: "run.publish",
      entity_type: "run",
      entity_id: String(run.id),
      before: JSON.stringify({ status: "draft" }),
      after: JSON.stringify({ status: "published", stops: run.stops.length, service_date: run.date }),
    });
  }
  for (const y of plan.yards) {
    for (const c of y.colonies.filter((c) => !c.active)) {
      audits.push({
        at: c.deactivatedAt ?? at(addDays(today, -1), 9),
        actor_user_id: idOf(owner),
        action: "colony.deactivate",
        entity_type: "colony",
        entity_id: String(idOf(c)),
        before: JSON.stringify({ active: true }),
        after: JSON.stringify({ active: false, notes: c.notes }),
      });
    }
  }
  await insertMany(trx, "email_log", emails);
  audits.sort((a, b) => (a.at as Date).getTime() - (b.at as Date).getTime());
  await insertMany(trx, "audit_log", audits);
}

// ---------------------------------------------------------------- entry point

export function demoSeasonAnchor(now: Date = new Date()): string {
  const override = process.env.SEED_TODAY;
  if (override) {
    parseDay(override);
    return override;
  }
  return todayInBusinessZone(now);
}

export async function seed(knex: Knex): Promise<void> {
  const plan = buildDemoPlan(demoSeasonAnchor());
  checkPlan(plan);
  await knex.transaction(async (trx) => {
    const [{ count }] = await trx("users").count<{ count: string | number }[]>({ count: "*" });
    if (Number(count) > 0) {
      throw new Error("demo seed: the users table is not empty; the demo seed only runs on an empty database");
    }
    await writePlan(trx, plan);
    // The demo business on its paperwork; every other setting keeps its default.
    await trx("settings").insert({ key: "business", value: JSON.stringify(DEMO_SETTINGS) });
  });
}
