import { data } from "react-router";
import { photoForUser } from "~/models/attachments.server";
import { db } from "~/services/db.server";
import { requireUser } from "~/services/permissions.server";
import { idParam } from "~/services/request.server";
import type { Route } from "./+types/attachment";

// A stored photo, for whoever may see it (see photoForUser); 404 for anyone else.
export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const photo = await photoForUser(db, idParam(params.attachmentId, "photo"), user);
  if (!photo) throw data("There is no photo with that number that you may see.", { status: 404 });
  return new Response(new Uint8Array(photo.content), {
    headers: {
      "Content-Type": photo.contentType,
      "Content-Length": String(photo.content.byteLength),
      "Cache-Control": "private, max-age=3600",
      "X-Content-Type-Options": "nosniff",
      "Content-Disposition": `inline; filename="photo"`,
    },
  });
}
