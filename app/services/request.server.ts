import { data } from "react-router";

// Reading what a request carries, answering 400 or 404 with a plain message instead of a 500
// when it is not what the route expects: a form action sent JSON, a body that does not parse,
// an id too large for the database, a date that does not exist (2027-02-30).

const FORM_TYPES = ["application/x-www-form-urlencoded", "multipart/form-data"];

function mediaType(request: Request): string {
  return (request.headers.get("content-type") ?? "").split(";")[0].trim().toLowerCase();
}

/** 400 unless the request body is an HTML form (url-encoded or multipart). */
export function requireFormBody(request: Request): void {
  if (!FORM_TYPES.includes(mediaType(request))) {
    throw data({ message: "This address takes a form. Send the fields as a form (application/x-www-form-urlencoded or multipart/form-data)." }, { status: 400 });
  }
}

/** The request's form fields; 400 with a message when the body is not a form or cannot be read. */
export async function readForm(request: Request): Promise<FormData> {
  requireFormBody(request);
  try {
    return await request.formData();
  } catch {
    throw data({ message: "The form could not be read. Reload the page and send it again." }, { status: 400 });
  }
}

const ID = /^[1-9][0-9]{0,15}$/;

/**
 * A whole-number id from the URL; 404 ("not found") when it is not one the database could
 * hold — letters, zero, or a number past what a JavaScript number keeps exactly (2^53 − 1,
 * well inside PostgreSQL's bigint).
 */
export function idParam(value: string | undefined, what = "page"): number {
  const id = value !== undefined && ID.test(value) ? Number(value) : NaN;
  if (!Number.isSafeInteger(id)) throw data(`There is no such ${what}.`, { status: 404 });
  return id;
}

/** True when `value` is a real calendar date written YYYY-MM-DD (2027-02-30 is not). */
export function isCalendarDate(value: string): boolean {
  const match = /^(\d{4})-(\d{2})-(\d{2})$/.exec(value);
  if (!match) return false;
  const [year, month, day] = [Number(match[1]), Number(match[2]), Number(match[3])];
  if (year < 1900 || year > 2999 || month < 1 || month > 12 || day < 1) return false;
  return day <= new Date(Date.UTC(year, month, 0)).getUTCDate();
}

/** A YYYY-MM-DD date from the URL; 404 with a message when it is not a real calendar date. */
export function dateParam(value: string | undefined): string {
  if (value === undefined || !isCalendarDate(value)) throw data("That is not a date on the calendar (use YYYY-MM-DD, e.g. 2027-03-14).", { status: 404 });
  return value;
}
