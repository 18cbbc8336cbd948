import { data, Link, redirect } from "react-router";
import { CrewForm } from "~/components/crew-form";
import { SafetyCautions } from "~/components/safety-cautions";
import { PageHeader } from "~/components/ui/card";
import { crewFormValuesFrom, crewSchema, type CrewFormValues } from "~/forms/crew";
import { fieldErrors, formValues, type FieldErrors } from "~/forms/field-errors";
import { crewFormValues, crewMemberChoices, CrewRefused, updateCrew } from "~/models/crews.server";
import { loadBusinessSettings } from "~/models/settings.server";
import { db } from "~/services/db.server";
import { mapConfig } from "~/services/env.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import { idParam, readForm } from "~/services/request.server";
import type { Route } from "./+types/crew-edit";

// Editing a crew: audited as crew.update with the before and after values. Bookings already
// taken stay where they are; the crews page lists any day ahead that the change left with more
// booked than it can take.

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Edit ${data?.values.name ?? "crew"} · Varroute` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.dispatch);
  const crewId = idParam(params.crewId, "crew");
  const values = await crewFormValues(db, crewId);
  if (!values) throw data("There is no such crew.", { status: 404 });
  const settings = await loadBusinessSettings(db);
  return { crewId, values, members: await crewMemberChoices(db, crewId), map: mapConfig(), doseGramsPerBroodBox: settings.doseGramsPerBroodBox };
}

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireRole(request, AREA_ROLES.dispatch);
  const crewId = idParam(params.crewId, "crew");
  const fields = formValues(await readForm(request));
  const values = crewFormValuesFrom(fields);
  const parsed = crewSchema.safeParse(fields);
  if (!parsed.success) return data({ errors: fieldErrors(parsed.error), values }, { status: 400 });
  let saved: boolean;
  try {
    saved = await updateCrew(db, crewId, parsed.data, user.id);
  } catch (error) {
    if (error instanceof CrewRefused) return data({ errors: { [error.field]: error.message } as FieldErrors, values }, { status: 409 });
    throw error;
  }
  if (!saved) throw data("There is no such crew.", { status: 404 });
  throw redirect(`/dispatch/crews?saved=${crewId}`);
}

export default function DispatchCrewEdit({ loaderData, actionData }: Route.ComponentProps) {
  const values: CrewFormValues = actionData?.values ?? loaderData.values;
  return (
    <>
      <Link to="/dispatch/crews" className="mb-3 inline-flex min-h-11 items-center font-semibold text-pine-800 underline">
        ← Crews
      </Link>
      <PageHeader title={`Edit ${loaderData.values.name}`} subtitle="Changes count from now on, for days already booked too: the booking calendar and the day planner follow them." />
      <div className="grid gap-6 lg:grid-cols-3">
        <div className="min-w-0 lg:col-span-2">
          <CrewForm
            values={values}
            errors={actionData?.errors ?? {}}
            members={loaderData.members}
            submitLabel="Save changes"
            map={loaderData.map}
            doseGramsPerBroodBox={loaderData.doseGramsPerBroodBox}
          />
        </div>
        <SafetyCautions audience="staff" />
      </div>
    </>
  );
}
