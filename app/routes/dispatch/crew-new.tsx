import { redirect } from "react-router";
import { CrewFormPage } from "~/components/crew-form-page";
import { NEW_CREW_VALUES } from "~/forms/crew";
import { createCrew } from "~/models/crews.server";
import { db } from "~/services/db.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/crew-new";
import { crewFormPageData, saveCrewForm } from "./crew-form-page.server";

// A new crew: audited as crew.create with the dispatcher as the actor.

export const meta: Route.MetaFunction = () => [{ title: "Add a crew · Varroute" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.dispatch);
  return crewFormPageData(null);
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireRole(request, AREA_ROLES.dispatch);
  const outcome = await saveCrewForm(request, (input) => createCrew(db, input, user.id));
  if ("refused" in outcome) return outcome.refused;
  throw redirect(`/dispatch/crews?added=${outcome.saved}`);
}

export default function DispatchCrewNew({ loaderData, actionData }: Route.ComponentProps) {
  return (
    <CrewFormPage
      title="Add a crew"
      subtitle="Once active, the crew's working days open room on the booking calendar and the day planner gives it runs."
      submitLabel="Add the crew"
      values={actionData?.values ?? NEW_CREW_VALUES}
      errors={actionData?.errors ?? {}}
      page={loaderData}
    />
  );
}
