import { data } from "react-router";
import { crewFormValuesFrom, crewSchema, type CrewInput } from "~/forms/crew";
import { fieldErrors, formValues, type FieldErrors } from "~/forms/field-errors";
import { crewMemberChoices, CrewRefused } from "~/models/crews.server";
import { loadBusinessSettings } from "~/models/settings.server";
import { db } from "~/services/db.server";
import { mapConfig } from "~/services/env.server";
import { readForm } from "~/services/request.server";

// What the add-a-crew and edit-a-crew pages share: the form's choices and settings, and the
// reading, checking and saving of what the form sent. The routes keep their own role check,
// URLs, redirects and messages.

/** What the crew form shows besides the crew: the member choices (for `crewId`, or a new crew when null), the map tiles and the dose per brood box. */
export async function crewFormPageData(crewId: number | null) {
  const settings = await loadBusinessSettings(db);
  return { members: await crewMemberChoices(db, crewId), map: mapConfig(), doseGramsPerBroodBox: settings.doseGramsPerBroodBox };
}

/**
 * Reads and checks the crew form, then saves it with `save`. Answers the form back with its
 * field errors (400 when a field is wrong, 409 when the save is refused, e.g. a member already
 * on another active crew) as `refused`, or gives what `save` returned as `saved`.
 */
export async function saveCrewForm<T>(request: Request, save: (input: CrewInput) => Promise<T>) {
  const fields = formValues(await readForm(request));
  const values = crewFormValuesFrom(fields);
  const parsed = crewSchema.safeParse(fields);
  if (!parsed.success) return { refused: data({ errors: fieldErrors(parsed.error), values }, { status: 400 }) };
  try {
    return { saved: await save(parsed.data) };
  } catch (error) {
    if (error instanceof CrewRefused) return { refused: data({ errors: { [error.field]: error.message } as FieldErrors, values }, { status: 409 }) };
    throw error;
  }
}
