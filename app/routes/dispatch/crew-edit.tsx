import { data, redirect } from "react-router";
import { CrewFormPage } from "~/components/crew-form-page";
import { crewFormValues, updateCrew } from "~/models/crews.server";
import { db } from "~/services/db.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import { idParam } from "~/services/request.server";
import type { Route } from "./+types/crew-edit";
import { crewFormPageData, saveCrewForm } from "./crew-form-page.server";

// Editing a crew: audited as crew.update with the before and after values. Bookings already
// taken stay where they are; the crews page lists any day ahead that the change left with more
// booked than it can take.

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Edit ${data?.values.name ?? "crew"} · Varroute` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.dispatch);
  const crewId = idParam(params.crewId, "crew");
  const values = await crewFormValues(db, crewId);
  if (!values) throw data("There is no such crew.", { status: 404 });
  return { crewId, values, ...(await crewFormPageData(crewId)) };
}

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireRole(request, AREA_ROLES.dispatch);
  const crewId = idParam(params.crewId, "crew");
  const outcome = await saveCrewForm(request, (input) => updateCrew(db, crewId, input, user.id));
  if ("refused" in outcome) return outcome.refused;
  if (!outcome.saved) throw data("There is no such crew.", { status: 404 });
  throw redirect(`/dispatch/crews?saved=${crewId}`);
}

export default function DispatchCrewEdit({ loaderData, actionData }: Route.ComponentProps) {
  return (
    <CrewFormPage
      title={`Edit ${loaderData.values.name}`}
      subtitle="Changes count from now on, for days already booked too: the booking calendar and the day planner follow them."
      submitLabel="Save changes"
      values={actionData?.values ?? loaderData.values}
      errors={actionData?.errors ?? {}}
      page={loaderData}
    />
  );
}
