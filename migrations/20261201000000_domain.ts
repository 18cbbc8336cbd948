import type { Knex } from "knex";

// The whole domain in one first migration, so later work adds columns rather than
// rethinking tables. Money is integer cents; service days are `date`; instants are
// `timestamptz`. Every count has a non-negative check.

const ROLES = ["customer", "crew", "dispatcher", "office", "owner"] as const;
const BROOD = ["brood", "broodless", "unknown"] as const;
const SKIP_REASONS = ["dead_out", "queenless", "supers_on", "aggressive", "not_reachable", "other"] as const;

function inList(column: string, values: readonly string[]) {
  return `${column} in (${values.map((v) => `'${v}'`).join(", ")})`;
}

function timestamps(t: Knex.CreateTableBuilder, knex: Knex) {
  t.timestamp("created_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
  t.timestamp("updated_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
}

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("users", (t) => {
    t.bigIncrements("id");
    t.text("email").notNullable();
    t.text("password_hash").notNullable();
    t.text("role").notNullable();
    t.text("name").notNullable();
    t.text("phone");
    t.text("applicator_licence");
    t.timestamp("disabled_at", { useTz: true });
    timestamps(t, knex);
    t.check(inList("role", ROLES), [], "users_role_check");
    t.check("email = lower(email) and position('@' in email) > 1", [], "users_email_check");
  });
  await knex.raw("create unique index users_email_unique on users (email)");

  await knex.schema.createTable("customers", (t) => {
    t.bigIncrements("id");
    t.bigInteger("user_id").unique().references("users.id").onDelete("set null");
    t.text("name").notNullable();
    t.text("email").notNullable();
    t.text("phone");
    t.text("address_line");
    t.text("city");
    t.text("region");
    t.text("postal_code");
    t.text("notes");
    t.text("stripe_customer_id").unique();
    t.timestamp("anonymised_at", { useTz: true });
    timestamps(t, knex);
  });
  await knex.raw("create index customers_email_idx on customers (lower(email))");
  await knex.raw("create index customers_name_idx on customers (lower(name))");

  await knex.schema.createTable("yards", (t) => {
    t.bigIncrements("id");
    t.bigInteger("customer_id").notNullable().references("customers.id").onDelete("cascade");
    t.text("name").notNullable();
    t.decimal("lat", 9, 6).notNullable();
    t.decimal("lng", 9, 6).notNullable();
    t.text("address");
    t.text("access_notes").notNullable().defaultTo("");
    t.integer("colony_count").notNullable().defaultTo(0);
    t.integer("brood_boxes_per_colony").notNullable().defaultTo(1);
    t.text("brood_status").notNullable().defaultTo("unknown");
    t.boolean("supers_off").notNullable().defaultTo(false);
    t.timestamp("archived_at", { useTz: true });
    timestamps(t, knex);
    t.check("lat between -90 and 90", [], "yards_lat_check");
    t.check("lng between -180 and 180", [], "yards_lng_check");
    t.check("colony_count >= 0", [], "yards_colony_count_check");
    t.check("brood_boxes_per_colony >= 0", [], "yards_brood_boxes_check");
    t.check(inList("brood_status", BROOD), [], "yards_brood_status_check");
    t.index(["customer_id"]);
  });

  await knex.schema.createTable("colonies", (t) => {
    t.bigIncrements("id");
    t.bigInteger("yard_id").notNullable().references("yards.id").onDelete("cascade");
    t.text("label").notNullable();
    t.integer("brood_boxes").notNullable().defaultTo(1);
    t.text("brood_status").notNullable().defaultTo("unknown");
    t.boolean("active").notNullable().defaultTo(true);
    t.text("notes");
    timestamps(t, knex);
    t.unique(["yard_id", "label"]);
    t.check("brood_boxes >= 0", [], "colonies_brood_boxes_check");
    t.check(inList("brood_status", BROOD), [], "colonies_brood_status_check");
  });

  await knex.schema.createTable("crews", (t) => {
    t.bigIncrements("id");
    t.text("name").notNullable().unique();
    t.text("start_label").notNullable();
    t.decimal("start_lat", 9, 6).notNullable();
    t.decimal("start_lng", 9, 6).notNullable();
    t.text("end_label");
    t.decimal("end_lat", 9, 6);
    t.decimal("end_lng", 9, 6);
    t.specificType("work_start", "time").notNullable().defaultTo("08:00");
    t.specificType("work_end", "time").notNullable().defaultTo("17:00");
    t.integer("vaporizers").notNullable().defaultTo(1);
    t.boolean("active").notNullable().defaultTo(true);
    timestamps(t, knex);
    t.check("vaporizers >= 1", [], "crews_vaporizers_check");
    t.check("work_end > work_start", [], "crews_hours_check");
    t.check("start_lat between -90 and 90 and start_lng between -180 and 180", [], "crews_start_check");
  });

  await knex.schema.createTable("crew_members", (t) => {
    t.bigInteger("crew_id").notNullable().references("crews.id").onDelete("cascade");
    t.bigInteger("user_id").notNullable().references("users.id").onDelete("cascade");
    t.primary(["crew_id", "user_id"]);
    t.index(["user_id"]);
  });

  await knex.schema.createTable("bookings", (t) => {
    t.bigIncrements("id");
    t.bigInteger("customer_id").notNullable().references("customers.id").onDelete("cascade");
    t.bigInteger("yard_id").notNullable().references("yards.id").onDelete("cascade");
    t.date("service_date").notNullable();
    t.text("time_preference").notNullable().defaultTo("any");
    t.integer("colonies").notNullable();
    t.text("status").notNullable().defaultTo("confirmed");
    t.text("notes");
    t.bigInteger("created_by").references("users.id").onDelete("set null");
    t.timestamp("cancelled_at", { useTz: true });
    t.text("cancel_reason");
    timestamps(t, knex);
    t.check("colonies >= 0", [], "bookings_colonies_check");
    t.check(inList("time_preference", ["any", "morning", "afternoon"]), [], "bookings_time_preference_check");
    t.check(inList("status", ["requested", "confirmed", "cancelled", "completed"]), [], "bookings_status_check");
    t.index(["customer_id"]);
    t.index(["service_date"]);
  });

  await knex.schema.createTable("courses", (t) => {
    t.bigIncrements("id");
    t.bigInteger("yard_id").notNullable().references("yards.id").onDelete("cascade");
    t.bigInteger("booking_id").references("bookings.id").onDelete("set null");
    t.text("brood_status").notNullable();
    t.integer("rounds_planned").notNullable();
    t.integer("interval_days").notNullable();
    t.text("status").notNullable().defaultTo("active");
    timestamps(t, knex);
    t.check("rounds_planned >= 1", [], "courses_rounds_check");
    t.check("interval_days >= 0", [], "courses_interval_check");
    t.check(inList("brood_status", BROOD), [], "courses_brood_status_check");
    t.check(inList("status", ["active", "complete", "cancelled"]), [], "courses_status_check");
    t.index(["yard_id"]);
  });

  await knex.schema.createTable("visits", (t) => {
    t.bigIncrements("id");
    t.bigInteger("course_id").notNullable().references("courses.id").onDelete("cascade");
    t.bigInteger("yard_id").notNullable().references("yards.id").onDelete("cascade");
    t.integer("round_number").notNullable();
    t.date("service_date").notNullable();
    t.text("time_preference").notNullable().defaultTo("any");
    t.text("status").notNullable().defaultTo("scheduled");
    t.integer("colonies_expected").notNullable();
    t.timestamp("supers_confirmed_at", { useTz: true });
    t.bigInteger("supers_confirmed_by").references("users.id").onDelete("set null");
    t.timestamp("started_at", { useTz: true });
    t.timestamp("finished_at", { useTz: true });
    t.bigInteger("finished_by").references("users.id").onDelete("set null");
    t.text("finish_key").unique();
    t.timestamp("report_sent_at", { useTz: true });
    t.text("weather_note");
    t.text("notes");
    t.text("defer_reason");
    timestamps(t, knex);
    t.check("round_number >= 1", [], "visits_round_check");
    t.check("colonies_expected >= 0", [], "visits_colonies_check");
    t.check(
      inList("status", ["scheduled", "deferred", "in_progress", "done", "cancelled"]),
      [],
      "visits_status_check",
    );
    t.check(inList("time_preference", ["any", "morning", "afternoon"]), [], "visits_time_preference_check");
    t.unique(["course_id", "round_number"]);
    t.index(["service_date"]);
    t.index(["yard_id"]);
  });

  await knex.schema.createTable("runs", (t) => {
    t.bigIncrements("id");
    t.bigInteger("crew_id").notNullable().references("crews.id").onDelete("cascade");
    t.date("service_date").notNullable();
    t.text("status").notNullable().defaultTo("draft");
    t.timestamp("published_at", { useTz: true });
    t.bigInteger("published_by").references("users.id").onDelete("set null");
    t.timestamp("safety_checked_at", { useTz: true });
    t.integer("drive_seconds").notNullable().defaultTo(0);
    t.integer("drive_meters").notNullable().defaultTo(0);
    t.integer("version").notNullable().defaultTo(1);
    timestamps(t, knex);
    t.unique(["crew_id", "service_date"]);
    t.check(inList("status", ["draft", "published", "in_progress", "done"]), [], "runs_status_check");
    t.check("drive_seconds >= 0 and drive_meters >= 0", [], "runs_drive_check");
    t.index(["service_date"]);
  });

  await knex.schema.createTable("stops", (t) => {
    t.bigIncrements("id");
    t.bigInteger("run_id").notNullable().references("runs.id").onDelete("cascade");
    t.bigInteger("visit_id").notNullable().unique().references("visits.id").onDelete("cascade");
    t.integer("position").notNullable();
    t.timestamp("arrive_at", { useTz: true }).notNullable();
    t.timestamp("start_at", { useTz: true }).notNullable();
    t.timestamp("leave_at", { useTz: true }).notNullable();
    t.integer("drive_seconds_from_previous").notNullable().defaultTo(0);
    t.integer("drive_meters_from_previous").notNullable().defaultTo(0);
    t.boolean("locked").notNullable().defaultTo(false);
    timestamps(t, knex);
    t.check("position >= 0", [], "stops_position_check");
    t.check("arrive_at <= start_at and start_at <= leave_at", [], "stops_times_check");
    t.index(["run_id", "position"]);
  });

  await knex.schema.createTable("tallies", (t) => {
    t.bigIncrements("id");
    t.bigInteger("visit_id").notNullable().references("visits.id").onDelete("cascade");
    t.bigInteger("colony_id").references("colonies.id").onDelete("set null");
    t.text("colony_label").notNullable();
    t.text("outcome").notNullable();
    t.text("skip_reason");
    t.text("skip_note");
    t.integer("brood_boxes").notNullable();
    t.decimal("dose_grams", 7, 2).notNullable().defaultTo(0);
    t.integer("mites");
    t.integer("bees_sampled");
    t.text("notes");
    t.bigInteger("recorded_by").references("users.id").onDelete("set null");
    t.timestamp("recorded_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.text("idempotency_key").unique();
    timestamps(t, knex);
    t.unique(["visit_id", "colony_label"]);
    t.check(inList("outcome", ["treated", "skipped"]), [], "tallies_outcome_check");
    t.check(
      `(outcome = 'treated' and skip_reason is null) or (outcome = 'skipped' and skip_reason is not null and ${inList("skip_reason", SKIP_REASONS)})`,
      [],
      "tallies_skip_reason_check",
    );
    t.check("brood_boxes >= 0 and dose_grams >= 0", [], "tallies_dose_check");
    t.check("mites is null or mites >= 0", [], "tallies_mites_check");
    t.check("bees_sampled is null or bees_sampled > 0", [], "tallies_bees_check");
  });

  await knex.schema.createTable("invoice_sequences", (t) => {
    t.integer("year").primary();
    t.integer("last_number").notNullable().defaultTo(0);
    t.check("last_number >= 0", [], "invoice_sequences_check");
  });

  await knex.schema.createTable("invoices", (t) => {
    t.bigIncrements("id");
    t.integer("year").notNullable();
    t.integer("sequence").notNullable();
    t.text("number").notNullable().unique();
    t.bigInteger("customer_id").notNullable().references("customers.id").onDelete("restrict");
    t.bigInteger("visit_id").references("visits.id").onDelete("set null");
    t.text("status").notNullable().defaultTo("open");
    t.date("issued_on").notNullable();
    t.date("due_on").notNullable();
    t.integer("subtotal_cents").notNullable();
    t.integer("tax_cents").notNullable();
    t.integer("total_cents").notNullable();
    t.text("currency").notNullable().defaultTo("usd");
    t.text("void_reason");
    t.text("stripe_checkout_session_id");
    t.timestamp("sent_at", { useTz: true });
    t.timestamp("reminded_at", { useTz: true });
    timestamps(t, knex);
    t.unique(["year", "sequence"]);
    t.check("subtotal_cents >= 0 and tax_cents >= 0 and total_cents >= 0", [], "invoices_cents_check");
    t.check("total_cents = subtotal_cents + tax_cents", [], "invoices_total_check");
    t.check(inList("status", ["open", "paid", "void", "refunded"]), [], "invoices_status_check");
    t.check("due_on >= issued_on", [], "invoices_due_check");
    t.index(["customer_id"]);
    t.index(["status", "due_on"]);
  });
  // One live invoice per visit; a voided one may be replaced.
  await knex.raw("create unique index invoices_visit_live_unique on invoices (visit_id) where status <> 'void'");

  await knex.schema.createTable("invoice_lines", (t) => {
    t.bigIncrements("id");
    t.bigInteger("invoice_id").notNullable().references("invoices.id").onDelete("cascade");
    t.integer("position").notNullable();
    t.text("kind").notNullable();
    t.text("description").notNullable();
    t.integer("quantity").notNullable();
    t.integer("unit_cents").notNullable();
    t.integer("amount_cents").notNullable();
    t.check("quantity >= 0 and unit_cents >= 0 and amount_cents >= 0", [], "invoice_lines_cents_check");
    t.check(inList("kind", ["colony", "trip_fee", "minimum", "adjustment"]), [], "invoice_lines_kind_check");
    t.index(["invoice_id"]);
  });

  await knex.schema.createTable("payments", (t) => {
    t.bigIncrements("id");
    t.bigInteger("invoice_id").notNullable().references("invoices.id").onDelete("restrict");
    t.integer("amount_cents").notNullable();
    t.text("method").notNullable();
    t.timestamp("received_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.text("reference");
    t.text("stripe_payment_intent_id").unique();
    t.bigInteger("recorded_by").references("users.id").onDelete("set null");
    timestamps(t, knex);
    t.check("amount_cents > 0", [], "payments_amount_check");
    t.check(inList("method", ["card", "cash", "cheque"]), [], "payments_method_check");
    t.index(["invoice_id"]);
  });

  await knex.schema.createTable("refunds", (t) => {
    t.bigIncrements("id");
    t.bigInteger("payment_id").notNullable().references("payments.id").onDelete("restrict");
    t.integer("amount_cents").notNullable();
    t.text("reason").notNullable();
    t.text("stripe_refund_id").unique();
    t.bigInteger("created_by").references("users.id").onDelete("set null");
    timestamps(t, knex);
    t.check("amount_cents > 0", [], "refunds_amount_check");
    t.index(["payment_id"]);
  });

  await knex.schema.createTable("attachments", (t) => {
    t.bigIncrements("id");
    t.bigInteger("yard_id").references("yards.id").onDelete("cascade");
    t.bigInteger("visit_id").references("visits.id").onDelete("cascade");
    t.text("original_name").notNullable();
    t.text("content_type").notNullable();
    t.integer("byte_size").notNullable();
    t.binary("content").notNullable();
    t.bigInteger("uploaded_by").references("users.id").onDelete("set null");
    timestamps(t, knex);
    t.check("byte_size > 0 and byte_size <= 10485760", [], "attachments_size_check");
    t.check("yard_id is not null or visit_id is not null", [], "attachments_owner_check");
    t.index(["yard_id"]);
    t.index(["visit_id"]);
  });

  await knex.schema.createTable("settings", (t) => {
    t.text("key").primary();
    t.jsonb("value").notNullable();
    t.bigInteger("updated_by").references("users.id").onDelete("set null");
    timestamps(t, knex);
  });

  await knex.schema.createTable("email_log", (t) => {
    t.bigIncrements("id");
    t.text("kind").notNullable();
    t.text("to_address").notNullable();
    t.text("subject").notNullable();
    t.bigInteger("customer_id").references("customers.id").onDelete("set null");
    t.bigInteger("invoice_id").references("invoices.id").onDelete("set null");
    t.bigInteger("booking_id").references("bookings.id").onDelete("set null");
    t.bigInteger("visit_id").references("visits.id").onDelete("set null");
    t.text("status").notNullable().defaultTo("queued");
    t.integer("attempts").notNullable().defaultTo(0);
    t.text("last_error");
    t.text("dedupe_key").unique();
    t.timestamp("sent_at", { useTz: true });
    timestamps(t, knex);
    t.check(inList("status", ["queued", "sent", "failed"]), [], "email_log_status_check");
    t.index(["invoice_id"]);
  });

  await knex.schema.createTable("webhook_events", (t) => {
    t.text("id").primary();
    t.text("type").notNullable();
    t.jsonb("payload").notNullable();
    t.timestamp("received_at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
  });

  await knex.schema.createTable("audit_log", (t) => {
    t.bigIncrements("id");
    t.timestamp("at", { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.bigInteger("actor_user_id").references("users.id").onDelete("set null");
    t.text("action").notNullable();
    t.text("entity_type").notNullable();
    t.text("entity_id").notNullable();
    t.jsonb("before");
    t.jsonb("after");
    t.index(["entity_type", "entity_id"]);
    t.index(["at"]);
  });
}

export async function down(knex: Knex): Promise<void> {
  for (const table of [
    "audit_log",
    "webhook_events",
    "email_log",
    "settings",
    "attachments",
    "refunds",
    "payments",
    "invoice_lines",
    "invoices",
    "invoice_sequences",
    "tallies",
    "stops",
    "runs",
    "visits",
    "courses",
    "bookings",
    "crew_members",
    "crews",
    "colonies",
    "yards",
    "customers",
    "users",
  ]) {
    await knex.schema.dropTableIfExists(table);
  }
}
