import { data, Link, redirect } from "react-router";
import { CrewForm } from "~/components/crew-form";
import { SafetyCautions } from "~/components/safety-cautions";
import { PageHeader } from "~/components/ui/card";
import { crewFormValuesFrom, crewSchema, NEW_CREW_VALUES, type CrewFormValues } from "~/forms/crew";
import { fieldErrors, formValues, type FieldErrors } from "~/forms/field-errors";
import { createCrew, crewMemberChoices, CrewRefused } from "~/models/crews.server";
import { loadBusinessSettings } from "~/models/settings.server";
import { db } from "~/services/db.server";
import { mapConfig } from "~/services/env.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import { readForm } from "~/services/request.server";
import type { Route } from "./+types/crew-new";

// A new crew: audited as crew.create with the dispatcher as the actor.

export const meta: Route.MetaFunction = () => [{ title: "Add a crew · Varroute" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.dispatch);
  const settings = await loadBusinessSettings(db);
  return { members: await crewMemberChoices(db, null), map: mapConfig(), doseGramsPerBroodBox: settings.doseGramsPerBroodBox };
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireRole(request, AREA_ROLES.dispatch);
  const fields = formValues(await readForm(request));
  const values = crewFormValuesFrom(fields);
  const parsed = crewSchema.safeParse(fields);
  if (!parsed.success) return data({ errors: fieldErrors(parsed.error), values }, { status: 400 });
  try {
    const crewId = await createCrew(db, parsed.data, user.id);
    throw redirect(`/dispatch/crews?added=${crewId}`);
  } catch (error) {
    if (error instanceof CrewRefused) return data({ errors: { [error.field]: error.message } as FieldErrors, values }, { status: 409 });
    throw error;
  }
}

export default function DispatchCrewNew({ loaderData, actionData }: Route.ComponentProps) {
  const values: CrewFormValues = actionData?.values ?? NEW_CREW_VALUES;
  return (
    <>
      <Link to="/dispatch/crews" className="mb-3 inline-flex min-h-11 items-center font-semibold text-pine-800 underline">
        ← Crews
      </Link>
      <PageHeader title="Add a crew" subtitle="Once active, the crew's working days open room on the booking calendar and the day planner gives it runs." />
      <div className="grid gap-6 lg:grid-cols-3">
        <div className="min-w-0 lg:col-span-2">
          <CrewForm
            values={values}
            errors={actionData?.errors ?? {}}
            members={loaderData.members}
            submitLabel="Add the crew"
            map={loaderData.map}
            doseGramsPerBroodBox={loaderData.doseGramsPerBroodBox}
          />
        </div>
        <SafetyCautions audience="staff" />
      </div>
    </>
  );
}
