import { data, Link, redirect } from "react-router";
import { SafetyCautions } from "~/components/safety-cautions";
import { PageHeader } from "~/components/ui/card";
import { YardForm, yardFormValues, type YardFormValues } from "~/components/yard-form";
import { fieldErrors, formValues, type FieldErrors } from "~/forms/field-errors";
import { yardSchema } from "~/forms/yard";
import { updateYard, YardEditRefused } from "~/models/yard-edit.server";
import { yardCrewFindings } from "~/models/yard-plan.server";
import { getYard } from "~/models/yards.server";
import { businessToday } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { mapConfig } from "~/services/env.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import { idParam, readForm } from "~/services/request.server";
import type { Route } from "./+types/yard-edit";

// The dispatcher corrects a customer's yard (a phone call: more colonies, a new gate code, a
// better pin). The same form and rules as the customer's own page; audited as yard.update with
// the dispatcher as the actor. Photos stay the customer's to manage.

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Edit ${data?.yard.name ?? "yard"} · Varroute` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.dispatch);
  const yard = await getYard(db, String(idParam(params.yardId, "yard")), await businessToday(db));
  return { yard, map: mapConfig(), crewFindings: await yardCrewFindings(db, yard) };
}

/** A booked visit on a day without room for the new count: the dispatcher may move it. */
type CrowdedVisit = { visitId: number; date: string };

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireRole(request, AREA_ROLES.dispatch);
  const yard = await getYard(db, String(idParam(params.yardId, "yard")), await businessToday(db));
  const values = formValues(await readForm(request)) as Record<string, string>;
  const parsed = yardSchema.safeParse(values);
  if (!parsed.success) return data({ errors: fieldErrors(parsed.error), values, crowdedVisits: [] as CrowdedVisit[] }, { status: 400 });
  let saved: boolean;
  try {
    saved = await updateYard(db, yard.customerId, yard.id, parsed.data, user.id);
  } catch (error) {
    if (error instanceof YardEditRefused) {
      const crowdedVisits = error.days.flatMap((day) => day.visitIds.map((visitId) => ({ visitId, date: day.date })));
      return data({ errors: { [error.field]: error.messageFor("dispatcher") } as FieldErrors, values, crowdedVisits }, { status: 409 });
    }
    throw error;
  }
  if (!saved) throw data("This yard is archived and can no longer be changed.", { status: 409 });
  throw redirect(`/dispatch/yards/${yard.id}?saved=1`);
}

export default function DispatchYardEdit({ loaderData, actionData }: Route.ComponentProps) {
  const { yard } = loaderData;
  const values: YardFormValues = actionData?.values ?? yardFormValues(yard);
  return (
    <>
      <Link to={`/dispatch/yards/${yard.id}`} className="mb-3 inline-flex min-h-11 items-center font-semibold text-pine-800 underline">
        ← {yard.name}
      </Link>
      <PageHeader title={`Edit ${yard.name}`} subtitle="Changes to the colony count also change the visits booked ahead, so the day's room and the crew's doses follow." />
      <div className="grid gap-6 lg:grid-cols-3">
        <div className="min-w-0 lg:col-span-2">
          {actionData?.crowdedVisits.length ? (
            <nav aria-label="Visits to move" className="mb-4 rounded-lg border-2 border-line bg-card px-4 py-3">
              <p className="font-semibold">Move a visit to a day with room, then save again:</p>
              <ul className="mt-1">
                {actionData.crowdedVisits.map((v) => (
                  <li key={v.visitId}>
                    <Link to={`/dispatch/visits/${v.visitId}`} className="inline-flex min-h-11 items-center font-semibold text-pine-800 underline">
                      Visit on {v.date}
                    </Link>
                  </li>
                ))}
              </ul>
            </nav>
          ) : null}
          <YardForm values={values} errors={actionData?.errors ?? {}} submitLabel="Save changes" map={loaderData.map} crewFindings={loaderData.crewFindings} />
        </div>
        <SafetyCautions audience="staff" />
      </div>
    </>
  );
}
