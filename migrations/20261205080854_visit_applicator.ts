import type { Knex } from "knex";

// Application records name who applied the product and their licence number, and must read
// as they were for the retention period. They read both from the crew member's account,
// which changes (a new name or licence on the profile), so a finished visit now keeps them:
// - applicator_name, applicator_licence: the member who finished the visit (the record of
//   one visit);
// - applicators: the office records' list, [{ name, licence }] — who recorded the treated
//   tallies in the order they started, else the member who finished.
// Null on a visit not finished; the records fall back to the accounts for a finished visit
// without them.
//
// The backfill copies, for the visits finished before this migration, the accounts as they
// are now: names or licences changed since are lost already, so this is the best available
// for old rows.

export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable("visits", (t) => {
    t.text("applicator_name");
    t.text("applicator_licence");
    t.jsonb("applicators");
  });
  await knex.raw(`
    update visits v set applicator_name = u.name, applicator_licence = u.applicator_licence
    from users u
    where u.id = v.finished_by and v.status = 'done'`);
  // The same rule as the records' (application-records.server.ts), licences trimmed, blank as null.
  await knex.raw(`
    update visits v set applicators = coalesce(
      (select jsonb_agg(jsonb_build_object('name', r.name, 'licence', nullif(btrim(r.applicator_licence, E' \\t\\r\\n'), '')) order by r.first_at, r.id)
       from (
         select u.id, u.name, u.applicator_licence, min(t.recorded_at) as first_at
         from tallies t join users u on u.id = t.recorded_by
         where t.visit_id = v.id and t.outcome = 'treated'
         group by u.id, u.name, u.applicator_licence
       ) r),
      (select jsonb_build_array(jsonb_build_object('name', u.name, 'licence', nullif(btrim(u.applicator_licence, E' \\t\\r\\n'), '')))
       from users u where u.id = v.finished_by),
      '[]'::jsonb)
    where v.status = 'done'`);
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable("visits", (t) => {
    t.dropColumn("applicators");
    t.dropColumn("applicator_licence");
    t.dropColumn("applicator_name");
  });
}
