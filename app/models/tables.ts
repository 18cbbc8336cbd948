// Row types for every table, declared once so Knex queries are typed
// (`db("yards")` returns YardRow). app/services/db.server.ts parses bigint and numeric
// columns to numbers and keeps `date` columns as ISO strings (YYYY-MM-DD).

export const ROLES = ["customer", "crew", "dispatcher", "office", "owner"] as const;
export type Role = (typeof ROLES)[number];
export const BROOD_STATUSES = ["brood", "broodless", "unknown"] as const;
export type BroodStatus = (typeof BROOD_STATUSES)[number];
export const TIME_PREFERENCES = ["any", "morning", "afternoon"] as const;
export type TimePreference = (typeof TIME_PREFERENCES)[number];
export const SKIP_REASONS = ["dead_out", "queenless", "supers_on", "aggressive", "not_reachable", "other"] as const;
export type SkipReason = (typeof SKIP_REASONS)[number];

type Id = number;
type Stamps = { created_at: Date; updated_at: Date };

export interface UserRow extends Stamps {
  id: Id;
  email: string;
  password_hash: string;
  role: Role;
  name: string;
  phone: string | null;
  applicator_licence: string | null;
  disabled_at: Date | null;
}

export interface CustomerRow extends Stamps {
  id: Id;
  user_id: Id | null;
  name: string;
  email: string;
  phone: string | null;
  address_line: string | null;
  city: string | null;
  region: string | null;
  postal_code: string | null;
  notes: string | null;
  stripe_customer_id: string | null;
  anonymised_at: Date | null;
  /** After an account deletion: the day its application-record fields are removed. */
  records_kept_until: string | null;
}

export interface YardRow extends Stamps {
  id: Id;
  customer_id: Id;
  name: string;
  lat: number;
  lng: number;
  address: string | null;
  access_notes: string;
  colony_count: number;
  brood_boxes_per_colony: number;
  brood_status: BroodStatus;
  supers_off: boolean;
  archived_at: Date | null;
  box_type: "deep" | "medium" | "nuc";
}

export interface ColonyRow extends Stamps {
  id: Id;
  yard_id: Id;
  label: string;
  brood_boxes: number;
  brood_status: BroodStatus;
  active: boolean;
  notes: string | null;
  box_type: "deep" | "medium" | "nuc";
}

export interface CrewRow extends Stamps {
  id: Id;
  name: string;
  start_label: string;
  start_lat: number;
  start_lng: number;
  end_label: string | null;
  end_lat: number | null;
  end_lng: number | null;
  work_start: string;
  work_end: string;
  vaporizers: number;
  active: boolean;
  /** ISO weekdays the crew works: 1 = Monday … 7 = Sunday. */
  working_weekdays: number[];
  /** The most colonies the crew treats in a day (null: no limit of its own). */
  max_colonies_per_day: number | null;
  /** The most grams of oxalic acid dihydrate the crew applies in a day (null: no limit). */
  max_dose_grams_per_day: number | null;
}

/** One crew's service day closed by the dispatcher (working-days.server.ts); closed false once reopened. */
export interface CrewDayRow {
  crew_id: Id;
  service_date: string;
  closed: boolean;
  note: string | null;
  updated_by: Id | null;
  created_at: Date;
  updated_at: Date;
}

export interface CrewMemberRow {
  crew_id: Id;
  user_id: Id;
}

export interface BookingRow extends Stamps {
  id: Id;
  customer_id: Id;
  yard_id: Id;
  service_date: string;
  time_preference: TimePreference;
  colonies: number;
  status: "requested" | "confirmed" | "cancelled" | "completed";
  notes: string | null;
  created_by: Id | null;
  cancelled_at: Date | null;
  cancel_reason: string | null;
}

export interface CourseRow extends Stamps {
  id: Id;
  yard_id: Id;
  booking_id: Id | null;
  brood_status: BroodStatus;
  rounds_planned: number;
  interval_days: number;
  status: "active" | "complete" | "cancelled";
}

export interface VisitRow extends Stamps {
  id: Id;
  course_id: Id;
  yard_id: Id;
  round_number: number;
  service_date: string;
  time_preference: TimePreference;
  status: "scheduled" | "deferred" | "in_progress" | "done" | "cancelled";
  colonies_expected: number;
  supers_confirmed_at: Date | null;
  supers_confirmed_by: Id | null;
  started_at: Date | null;
  finished_at: Date | null;
  finished_by: Id | null;
  finish_key: string | null;
  report_sent_at: Date | null;
  weather_note: string | null;
  /** The product and its registration number as in settings when the visit was finished (null before that). */
  product_name: string | null;
  product_registration_number: string | null;
  /** Who finished the visit and their licence number, as on their account then (null before that). */
  applicator_name: string | null;
  applicator_licence: string | null;
  /** The application records' applicators as they were when the visit was finished: [{ name, licence }] (null before that). */
  applicators: unknown;
  notes: string | null;
  defer_reason: string | null;
  /** Air temperature the crew read at the yard, °C. */
  air_temp_c: string | null;
}

export interface RunRow extends Stamps {
  id: Id;
  crew_id: Id;
  service_date: string;
  status: "draft" | "published" | "in_progress" | "done";
  published_at: Date | null;
  published_by: Id | null;
  safety_checked_at: Date | null;
  drive_seconds: number;
  drive_meters: number;
  version: number;
}

export interface StopRow extends Stamps {
  id: Id;
  run_id: Id;
  visit_id: Id;
  position: number;
  arrive_at: Date;
  start_at: Date;
  leave_at: Date;
  drive_seconds_from_previous: number;
  drive_meters_from_previous: number;
  locked: boolean;
}

export interface TallyRow extends Stamps {
  id: Id;
  visit_id: Id;
  colony_id: Id | null;
  colony_label: string;
  outcome: "treated" | "skipped";
  skip_reason: SkipReason | null;
  skip_note: string | null;
  brood_boxes: number;
  dose_grams: number;
  mites: number | null;
  bees_sampled: number | null;
  /** The wash sample's volume in mL, when the crew gave it (numeric: read through Number()). */
  wash_sample_ml: number | null;
  /** True when bees_sampled was estimated from wash_sample_ml, not counted. */
  bees_estimated: boolean;
  notes: string | null;
  recorded_by: Id | null;
  recorded_at: Date;
  idempotency_key: string | null;
  box_type: "deep" | "medium" | "nuc";
  /** Whether the crew saw brood in the colony at this visit; null when they did not say. */
  brood_seen: boolean | null;
}

export interface InvoiceSequenceRow {
  year: number;
  last_number: number;
}

export interface InvoiceRow extends Stamps {
  id: Id;
  year: number;
  sequence: number;
  number: string;
  customer_id: Id;
  visit_id: Id | null;
  status: "open" | "paid" | "void" | "refunded";
  issued_on: string;
  due_on: string;
  subtotal_cents: number;
  tax_cents: number;
  total_cents: number;
  currency: string;
  void_reason: string | null;
  stripe_checkout_session_id: string | null;
  sent_at: Date | null;
  reminded_at: Date | null;
}

export interface InvoiceLineRow {
  id: Id;
  invoice_id: Id;
  position: number;
  kind: "colony" | "trip_fee" | "minimum" | "adjustment";
  description: string;
  quantity: number;
  unit_cents: number;
  amount_cents: number;
}

export interface PaymentRow extends Stamps {
  id: Id;
  invoice_id: Id;
  amount_cents: number;
  method: "card" | "cash" | "cheque";
  received_at: Date;
  reference: string | null;
  stripe_payment_intent_id: string | null;
  recorded_by: Id | null;
}

export interface RefundRow extends Stamps {
  id: Id;
  payment_id: Id;
  amount_cents: number;
  reason: string;
  stripe_refund_id: string | null;
  created_by: Id | null;
}

export interface AttachmentRow extends Stamps {
  id: Id;
  yard_id: Id | null;
  visit_id: Id | null;
  original_name: string;
  content_type: string;
  byte_size: number;
  content: Buffer;
  uploaded_by: Id | null;
}

export interface SettingRow extends Stamps {
  key: string;
  value: unknown;
  updated_by: Id | null;
}

export interface EmailLogRow extends Stamps {
  id: Id;
  kind: string;
  to_address: string;
  subject: string;
  customer_id: Id | null;
  invoice_id: Id | null;
  booking_id: Id | null;
  visit_id: Id | null;
  status: "queued" | "sent" | "failed";
  attempts: number;
  last_error: string | null;
  dedupe_key: string | null;
  sent_at: Date | null;
  /** The message as sent: HTML and plain-text bodies (null on rows from before the outbox). */
  html: string | null;
  text_body: string | null;
  attachments: { filename: string; contentType: string; contentBase64: string }[] | null;
  /** When the sweep should (re)try a queued or failed message; null once sent or given up. */
  next_attempt_at: Date | null;
}

export interface WebhookEventRow {
  id: string;
  type: string;
  payload: unknown;
  received_at: Date;
}

export interface ServiceDayRow {
  service_date: string;
  capacity_colonies: number | null;
  closed: boolean;
  note: string | null;
  updated_by: Id | null;
  created_at: Date;
  updated_at: Date;
}

export interface AuditLogRow {
  id: Id;
  at: Date;
  actor_user_id: Id | null;
  action: string;
  entity_type: string;
  entity_id: string;
  before: unknown;
  after: unknown;
}

/** A change from a crew's phone, applied once, by its idempotency key (tallies.server.ts). */
export interface AppliedChangeRow {
  key: string;
  crew_id: Id;
  kind: "safety" | "supers" | "tally" | "air_temp" | "finish";
  visit_id: Id | null;
  user_id: Id | null;
  applied_at: Date;
  /** What the change returned when it was applied; a replay is answered with it. */
  result: unknown;
}

/** A signed-in session (sessions.server.ts); `id` is the SHA-256 hash (hex) of the cookie's token. */
export interface SessionRow {
  id: string;
  user_id: Id;
  /** The session's values other than the user: flash notices. */
  data: Record<string, unknown>;
  user_agent: string | null;
  created_at: Date;
  last_seen_at: Date;
  expires_at: Date;
}

/** A Stripe Checkout Session made for an invoice (payments.server.ts); amount null on sessions from before the table. */
export interface CheckoutSessionRow {
  id: string;
  invoice_id: Id;
  amount_cents: number | null;
  currency: string;
  status: "open" | "expired" | "paid" | "refunded";
  payment_intent_id: string | null;
  created_at: Date;
  updated_at: Date;
}

/** Card money the webhook refused and gave back, once per payment intent (payments.server.ts). */
export interface CardPaymentRefusalRow {
  payment_intent_id: string;
  checkout_session_id: string | null;
  invoice_id: Id | null;
  amount_cents: number;
  currency: string;
  reason: "no_invoice" | "unknown_session" | "invoice_not_open" | "currency_mismatch" | "over_balance";
  stripe_refund_id: string | null;
  created_at: Date;
}

/** A sign-up waiting for its e-mail address to be confirmed (sign-up-requests.server.ts); `token_hash` is the SHA-256 (hex) of the link's token. */
export interface SignUpRequestRow {
  id: Id;
  token_hash: string;
  name: string;
  email: string;
  phone: string | null;
  password_hash: string;
  created_at: Date;
  expires_at: Date;
  used_at: Date | null;
}

/** An invitation for a new member of staff (staff.server.ts); `token_hash` is the SHA-256 (hex) of the link's token. */
export interface StaffInvitationRow {
  id: Id;
  token_hash: string;
  email: string;
  name: string;
  role: Exclude<Role, "customer">;
  /** The crew a crew member joins on accepting (null: none chosen, or not crew). */
  crew_id: Id | null;
  invited_by: Id | null;
  created_at: Date;
  expires_at: Date;
  accepted_at: Date | null;
  revoked_at: Date | null;
}

/** A "forgot password" link (password-resets.server.ts); `token_hash` is the SHA-256 (hex) of the link's token. */
export interface PasswordResetRow {
  id: Id;
  token_hash: string;
  user_id: Id;
  created_at: Date;
  expires_at: Date;
  used_at: Date | null;
  /** The client address that asked for the link. */
  requested_from: string | null;
}

/** A link that makes `new_email` the account's address when followed (profile.server.ts). */
export interface EmailChangeRow {
  id: Id;
  token_hash: string;
  user_id: Id;
  new_email: string;
  created_at: Date;
  expires_at: Date;
  used_at: Date | null;
  requested_from: string | null;
}

/** The one row saying the business was set up (setup.server.ts): by the setup page, or an owner who existed before it. */
export interface BusinessSetupRow {
  id: true;
  completed_at: Date;
  owner_user_id: Id | null;
}

declare module "knex/types/tables" {
  interface Tables {
    users: UserRow;
    customers: CustomerRow;
    yards: YardRow;
    colonies: ColonyRow;
    crews: CrewRow;
    crew_members: CrewMemberRow;
    crew_days: CrewDayRow;
    bookings: BookingRow;
    courses: CourseRow;
    visits: VisitRow;
    runs: RunRow;
    stops: StopRow;
    tallies: TallyRow;
    invoice_sequences: InvoiceSequenceRow;
    invoices: InvoiceRow;
    invoice_lines: InvoiceLineRow;
    payments: PaymentRow;
    refunds: RefundRow;
    attachments: AttachmentRow;
    settings: SettingRow;
    email_log: EmailLogRow;
    webhook_events: WebhookEventRow;
    audit_log: AuditLogRow;
    service_days: ServiceDayRow;
    applied_changes: AppliedChangeRow;
    checkout_sessions: CheckoutSessionRow;
    card_payment_refusals: CardPaymentRefusalRow;
    sessions: SessionRow;
    sign_up_requests: SignUpRequestRow;
    password_resets: PasswordResetRow;
    email_changes: EmailChangeRow;
    staff_invitations: StaffInvitationRow;
    business_setup: BusinessSetupRow;
  }
}
