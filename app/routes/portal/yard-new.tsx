import { data, redirect } from "react-router";
import { PageHeader } from "~/components/ui/card";
import { YardForm, type YardFormValues } from "~/components/yard-form";
import { fieldErrors, formValues } from "~/forms/field-errors";
import { yardSchema } from "~/forms/yard";
import { createYard } from "~/models/yard-edit.server";
import { db } from "~/services/db.server";
import { mapConfig } from "~/services/env.server";
import { requireCustomer } from "~/services/permissions.server";
import { readForm } from "~/services/request.server";
import type { Route } from "./+types/yard-new";

export const meta: Route.MetaFunction = () => [{ title: "Add a yard · Varroute" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireCustomer(request);
  return { map: mapConfig() };
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireCustomer(request);
  const values = formValues(await readForm(request)) as Record<string, string>;
  const parsed = yardSchema.safeParse(values);
  if (!parsed.success) return data({ errors: fieldErrors(parsed.error), values }, { status: 400 });
  const yardId = await createYard(db, user.customerId, parsed.data, user.id);
  throw redirect(`/portal/yards/${yardId}/edit?created=1`);
}

export default function YardNew({ loaderData, actionData }: Route.ComponentProps) {
  return (
    <>
      <PageHeader title="Add a yard" subtitle="One yard per place your hives stand. Drop a pin where the hives are, not at the house." />
      <YardForm values={(actionData?.values ?? {}) as YardFormValues} errors={actionData?.errors ?? {}} submitLabel="Save the yard" map={loaderData.map} />
    </>
  );
}
