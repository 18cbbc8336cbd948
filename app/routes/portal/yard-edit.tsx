import { MaxFileSizeExceededError, MaxFilesExceededError, MaxTotalSizeExceededError, parseFormData } from "@remix-run/form-data-parser";
import { data, Form, Link, redirect, useNavigation } from "react-router";
import { z } from "zod";
import { Button, buttonClass } from "~/components/ui/button";
import { Card, PageHeader } from "~/components/ui/card";
import { FormMessage } from "~/components/ui/field";
import { YardForm, yardFormValues, type YardFormValues } from "~/components/yard-form";
import { fieldErrors, formValues } from "~/forms/field-errors";
import { PHOTO_MAX_BYTES, yardSchema } from "~/forms/yard";
import { deleteYardPhoto, listYardPhotos, PHOTO_TOO_LARGE, PhotoRefused, storeYardPhoto } from "~/models/attachments.server";
import { updateYard, YardEditRefused } from "~/models/yard-edit.server";
import { yardCrewFindings } from "~/models/yard-plan.server";
import { getYardForCustomer } from "~/models/yards.server";
import { businessToday } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { mapConfig } from "~/services/env.server";
import { requireCustomer } from "~/services/permissions.server";
import { idParam, readForm, requireFormBody } from "~/services/request.server";
import type { Route } from "./+types/yard-edit";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Edit ${data?.yard.name ?? "yard"} · Varroute` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireCustomer(request);
  const yard = await getYardForCustomer(db, user.customerId, String(idParam(params.yardId, "yard")), await businessToday(db));
  const [photos, crewFindings] = await Promise.all([listYardPhotos(db, yard.id), yardCrewFindings(db, yard)]);
  const url = new URL(request.url);
  return { yard, photos, crewFindings, map: mapConfig(), created: url.searchParams.has("created"), saved: url.searchParams.has("saved") };
}

type ActionResult =
  | { intent: "save"; errors: Record<string, string | undefined>; values: Record<string, string> }
  | { intent: "photo"; photoError: string };

const deletePhotoSchema = z.object({
  intent: z.literal("delete-photo"),
  attachmentId: z.coerce.number({ error: "Choose a photo to remove." }).int().positive("Choose a photo to remove.").max(Number.MAX_SAFE_INTEGER),
});

/** The photo form's fields; a body the parser cannot read is the sender's error (400), said at the photo field. */
async function readPhotoUpload(request: Request): Promise<FormData | { status: number; photoError: string }> {
  try {
    return await parseFormData(request, { maxFileSize: PHOTO_MAX_BYTES, maxFiles: 1 });
  } catch (error) {
    if (error instanceof MaxFileSizeExceededError || error instanceof MaxTotalSizeExceededError) return { status: 413, photoError: PHOTO_TOO_LARGE };
    if (error instanceof MaxFilesExceededError) return { status: 400, photoError: "Upload one photo at a time." };
    // FormDataParseError, MultipartParseError and the other parser limits: a malformed body.
    return { status: 400, photoError: "The upload could not be read. Choose the photo again and send it once more." };
  }
}

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireCustomer(request);
  const yard = await getYardForCustomer(db, user.customerId, String(idParam(params.yardId, "yard")), await businessToday(db));
  requireFormBody(request);
  const isUpload = request.headers.get("Content-Type")?.toLowerCase().startsWith("multipart/form-data");
  if (isUpload) {
    const form = await readPhotoUpload(request);
    if (!(form instanceof FormData)) return data<ActionResult>({ intent: "photo", photoError: form.photoError }, { status: form.status });
    const file = form.get("photo");
    if (!(file instanceof File) || file.size === 0) return data<ActionResult>({ intent: "photo", photoError: "Choose a photo to upload." }, { status: 400 });
    try {
      await storeYardPhoto(db, { yardId: yard.id, name: file.name, bytes: new Uint8Array(await file.arrayBuffer()), uploadedBy: user.id });
    } catch (error) {
      if (error instanceof PhotoRefused) return data<ActionResult>({ intent: "photo", photoError: error.message }, { status: 400 });
      throw error;
    }
    throw redirect(`/portal/yards/${yard.id}/edit?saved=photo`);
  }
  const values = formValues(await readForm(request)) as Record<string, string>;
  if (values.intent === "delete-photo") {
    const removal = deletePhotoSchema.safeParse(values);
    if (!removal.success) return data<ActionResult>({ intent: "photo", photoError: "Choose a photo to remove." }, { status: 400 });
    await deleteYardPhoto(db, yard.id, removal.data.attachmentId, user.id);
    throw redirect(`/portal/yards/${yard.id}/edit`);
  }
  const parsed = yardSchema.safeParse(values);
  if (!parsed.success) return data<ActionResult>({ intent: "save", errors: fieldErrors(parsed.error), values }, { status: 400 });
  try {
    await updateYard(db, user.customerId, yard.id, parsed.data, user.id);
  } catch (error) {
    if (error instanceof YardEditRefused) return data<ActionResult>({ intent: "save", errors: { [error.field]: error.messageFor("customer") }, values }, { status: 409 });
    throw error;
  }
  throw redirect(`/portal/yards/${yard.id}?saved=1`);
}

export default function YardEdit({ loaderData, actionData }: Route.ComponentProps) {
  const { yard, photos, created } = loaderData;
  const busy = useNavigation().state === "submitting";
  const result = actionData as ActionResult | undefined;
  const values: YardFormValues = result?.intent === "save" ? result.values : yardFormValues(yard);
  return (
    <>
      <Link to={`/portal/yards/${yard.id}`} className="mb-3 inline-flex min-h-11 items-center font-semibold text-pine-800 underline">
        ← {yard.name}
      </Link>
      <PageHeader
        title={`Edit ${yard.name}`}
        actions={
          <Link to={`/portal/book?yard=${yard.id}`} className={buttonClass("primary")}>
            Book this yard
          </Link>
        }
      />
      {created ? (
        <div className="mb-4">
          <FormMessage tone="info" message="Yard saved. Add a photo of the hives or the way in if it helps the crew, then book a treatment." />
        </div>
      ) : null}
      <div className="grid gap-6 lg:grid-cols-3">
        <div className="min-w-0 lg:col-span-2">
          <YardForm values={values} errors={result?.intent === "save" ? result.errors : {}} submitLabel="Save changes" map={loaderData.map} crewFindings={loaderData.crewFindings} />
        </div>
        <Card title="Photos" className="h-fit">
          <p className="text-sm text-ink-soft">Photos of the hives, the gate or the parking help the crew find their way. JPEG, PNG, WebP or GIF, up to 10 MB each.</p>
          {photos.length ? (
            <ul className="mt-3 grid grid-cols-2 gap-2">
              {photos.map((photo) => (
                <li key={photo.id} className="flex flex-col gap-1">
                  <img src={`/api/attachments/${photo.id}`} alt={`Photo ${photo.name}`} className="aspect-square w-full rounded-lg border border-line object-cover" loading="lazy" />
                  <Form method="post">
                    <input type="hidden" name="intent" value="delete-photo" />
                    <input type="hidden" name="attachmentId" value={photo.id} />
                    <button type="submit" className="min-h-11 w-full rounded-lg border-2 border-line text-sm font-semibold hover:bg-paper">
                      Remove <span className="sr-only">{photo.name}</span>
                    </button>
                  </Form>
                </li>
              ))}
            </ul>
          ) : (
            <p className="mt-3">No photos yet.</p>
          )}
          <Form method="post" encType="multipart/form-data" className="mt-4 flex flex-col gap-2">
            <label htmlFor="photo" className="font-semibold">
              Add a photo
            </label>
            <input
              id="photo"
              name="photo"
              type="file"
              accept="image/jpeg,image/png,image/webp,image/gif"
              aria-invalid={result?.intent === "photo" ? true : undefined}
              aria-describedby={result?.intent === "photo" ? "photo-error" : undefined}
              className="min-h-11 rounded-lg border-2 border-line bg-card p-2"
            />
            {result?.intent === "photo" ? (
              <p id="photo-error" role="alert" className="font-semibold text-alarm-700">
                {result.photoError}
              </p>
            ) : null}
            <Button type="submit" variant="secondary" disabled={busy}>
              Upload photo
            </Button>
          </Form>
        </Card>
      </div>
    </>
  );
}
