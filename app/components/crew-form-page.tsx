import { Link } from "react-router";
import type { CrewFormValues } from "~/forms/crew";
import type { FieldErrors } from "~/forms/field-errors";
import { CrewForm, type CrewMemberChoice } from "./crew-form";
import { SafetyCautions } from "./safety-cautions";
import { PageHeader } from "./ui/card";

/** The page around the crew form, for adding and editing a crew: back link, heading, form, safety cautions. */
export function CrewFormPage({
  title,
  subtitle,
  submitLabel,
  values,
  errors,
  page,
}: {
  title: string;
  subtitle: string;
  submitLabel: string;
  values: CrewFormValues;
  errors: FieldErrors;
  page: { members: CrewMemberChoice[]; map: { tileUrl: string | null; attribution: string | null }; doseGramsPerBroodBox: number };
}) {
  return (
    <>
      <Link to="/dispatch/crews" className="mb-3 inline-flex min-h-11 items-center font-semibold text-pine-800 underline">
        ← Crews
      </Link>
      <PageHeader title={title} subtitle={subtitle} />
      <div className="grid gap-6 lg:grid-cols-3">
        <div className="min-w-0 lg:col-span-2">
          <CrewForm values={values} errors={errors} members={page.members} submitLabel={submitLabel} map={page.map} doseGramsPerBroodBox={page.doseGramsPerBroodBox} />
        </div>
        <SafetyCautions audience="staff" />
      </div>
    </>
  );
}
