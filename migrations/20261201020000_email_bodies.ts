import type { Knex } from "knex";

// email_log becomes a durable outbox: the message itself (HTML, plain text, attachments)
// is stored with the row inside the transaction that decides to send it, and a worker
// delivers it after commit. next_attempt_at drives the retry sweep (exponential backoff);
// it is null once a message is sent or given up on.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable("email_log", (t) => {
    t.text("html");
    t.text("text_body");
    t.jsonb("attachments");
    t.timestamp("next_attempt_at", { useTz: true });
  });
  // The sweep reads only unsent rows that are due, oldest first.
  await knex.raw(
    "create index email_log_due_idx on email_log (next_attempt_at) where status in ('queued', 'failed') and next_attempt_at is not null",
  );
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw("drop index if exists email_log_due_idx");
  await knex.schema.alterTable("email_log", (t) => {
    t.dropColumn("next_attempt_at");
    t.dropColumn("attachments");
    t.dropColumn("text_body");
    t.dropColumn("html");
  });
}
