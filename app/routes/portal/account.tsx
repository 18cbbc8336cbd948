import { data, Form, useNavigation } from "react-router";
import { formatCents, formatServiceDate } from "~/components/format";
import { Button, buttonClass } from "~/components/ui/button";
import { Card, PageHeader } from "~/components/ui/card";
import { Field, FormMessage } from "~/components/ui/field";
import { fieldErrors, formValues, type FieldErrors } from "~/forms/field-errors";
import {
  AccountDeletionRefused,
  accountDeletionSchema,
  accountOverview,
  deleteCustomerAccount,
  DELETE_CONFIRMATION_WORD,
} from "~/models/account-data.server";
import { verifyCredentials } from "~/models/users.server";
import { businessToday } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { requireCustomer } from "~/services/permissions.server";
import { readForm } from "~/services/request.server";
import { destroyUserSession } from "~/services/session.server";
import { checkPasswordWithinLimits, clientAddress, forgetSignInFailures, SignInTooSoon, waitText } from "~/services/sign-in-limits.server";
import type { Route } from "./+types/account";

export const meta: Route.MetaFunction = () => [{ title: "Your account · Varroute" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireCustomer(request);
  const overview = await accountOverview(db, user.customerId, await businessToday(db));
  return { overview, word: DELETE_CONFIRMATION_WORD };
}

type ActionResult = { errors: FieldErrors; confirmation: string };

export async function action({ request }: Route.ActionArgs) {
  const user = await requireCustomer(request);
  const values = formValues(await readForm(request));
  const confirmation = typeof values.confirmation === "string" ? values.confirmation : "";
  const refuse = (errors: FieldErrors, status: number) => data<ActionResult>({ errors, confirmation }, { status });

  const parsed = accountDeletionSchema.safeParse(values);
  if (!parsed.success) return refuse(fieldErrors(parsed.error), 400);

  // The password is checked like a sign-in, and wrong tries count towards the same limits.
  let confirmed: true | null;
  try {
    confirmed = await checkPasswordWithinLimits(user.email, clientAddress(request), async () =>
      (await verifyCredentials(db, user.email, parsed.data.password)) === user.id ? true : null,
    );
  } catch (error) {
    if (error instanceof SignInTooSoon) return refuse({ password: `Too many wrong passwords. Try again in ${waitText(error.waitMs)}.` }, 429);
    throw error;
  }
  if (!confirmed) return refuse({ password: "That is not the password of this account." }, 400);

  let keptUntil: string | null;
  try {
    ({ keptUntil } = await deleteCustomerAccount(db, { customerId: user.customerId, actorUserId: user.id }));
  } catch (error) {
    if (error instanceof AccountDeletionRefused) return refuse({ form: error.message }, 409);
    throw error;
  }
  // The sign-in limits count failures by e-mail address; that address is gone now.
  await forgetSignInFailures(user.email);
  // The home page says what was kept, and until when (the customer is signed out by then).
  return destroyUserSession(request, `/?accountDeleted=1${keptUntil ? `&recordsKeptUntil=${keptUntil}` : ""}`);
}

function count(n: number, one: string, many: string) {
  return `${n} ${n === 1 ? one : many}`;
}

/** What a deletion keeps for the application records, and until when, in plain words. */
function recordsKeptSentence(keptUntil: string): string {
  return `Your name, address and the places your colonies were treated stay on the treatment records the law asks us to keep, until ${formatServiceDate(keptUntil)}; then they are removed. Everything else is removed now.`;
}

export default function AccountPage({ loaderData, actionData }: Route.ComponentProps) {
  const { overview, word } = loaderData;
  const keptUntil = overview.recordsKeptUntil;
  const busy = useNavigation().state === "submitting";
  const errors: FieldErrors = actionData?.errors ?? {};
  return (
    <>
      <PageHeader title="Your account" subtitle="Your details, a copy of your data, and deleting your account." />
      <div className="grid gap-6 lg:grid-cols-2">
        <Card title="Your details">
          <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-2">
            <dt className="font-semibold">Name</dt>
            <dd className="min-w-0 break-words">{overview.name}</dd>
            <dt className="font-semibold">E-mail</dt>
            <dd className="min-w-0 break-words">{overview.email}</dd>
            <dt className="font-semibold">Phone</dt>
            <dd className="min-w-0 break-words">{overview.phone ?? "Not given"}</dd>
            <dt className="font-semibold">Address</dt>
            <dd className="min-w-0 break-words">{overview.address.length ? overview.address.join(", ") : "Not given"}</dd>
          </dl>
          <p className="mt-3 text-sm text-ink-soft">To change these details, reply to any e-mail from us or call the office.</p>
        </Card>

        <Card title="A copy of your data">
          <p>
            Download everything Varroute holds about you: your details, yards and access notes, bookings, visits, the crew&apos;s
            record for each of your colonies, invoices, payments, refunds, the e-mails we sent you and the names of your photos.
          </p>
          <p className="mt-2 text-sm text-ink-soft">The file is in JSON, a plain-text format that most spreadsheet and text programs can open.</p>
          <a href="/portal/account/export" download className={buttonClass("secondary", "mt-4")}>
            Download my data
          </a>
        </Card>
      </div>

      <section aria-labelledby="delete-title" className="mt-6 rounded-xl border-2 border-alarm-700 bg-card p-4 sm:p-5">
        <h2 id="delete-title" className="text-lg font-bold">
          Delete your account
        </h2>
        <p className="mt-2">This cannot be undone. You may want to download a copy of your data first.</p>
        {keptUntil ? (
          <p className="mt-2 rounded-lg border-2 border-ochre-500 bg-ochre-100 px-4 py-3" data-testid="records-kept-until">
            {recordsKeptSentence(keptUntil)}
          </p>
        ) : null}

        <div className="mt-4 grid gap-4 md:grid-cols-2">
          <div>
            <h3 className="font-bold">What we remove</h3>
            <ul className="mt-1 list-disc pl-6">
              {keptUntil ? (
                <>
                  <li>Your e-mail address and phone number now; your name and street address after {formatServiceDate(keptUntil)}.</li>
                  <li>
                    Your yards&apos; access notes (gate codes, where the key is) now; their names, street addresses and exact map positions after{" "}
                    {formatServiceDate(keptUntil)}.
                  </li>
                </>
              ) : (
                <>
                  <li>Your name, e-mail address, phone number and street address.</li>
                  <li>Your yards&apos; names, street addresses and access notes (gate codes, where the key is).</li>
                </>
              )}
              <li>{overview.photos > 0 ? `Your ${count(overview.photos, "photo", "photos")}.` : "Any photos of your yards."}</li>
              <li>The text of the e-mails we sent you.</li>
              <li>Your sign-in: you will be signed out and cannot sign in again.</li>
              <li>
                {overview.openVisits > 0
                  ? `Your ${count(overview.openVisits, "booked visit", "booked visits")}: ${overview.openVisits === 1 ? "it is" : "they are"} cancelled, without further e-mails.`
                  : "Any visit still booked: it is cancelled."}
              </li>
            </ul>
          </div>
          <div>
            <h3 className="font-bold">What we keep, and why</h3>
            <ul className="mt-1 list-disc pl-6">
              <li>
                Invoices, payments and refunds ({count(overview.invoices, "invoice", "invoices")}): tax and bookkeeping rules require a
                business to keep them for several years.
              </li>
              <li>
                The record of each treatment ({count(overview.visitsDone, "visit", "visits")} done): rules for applying pesticides for hire
                require the date, place, product and amount used to be kept.{" "}
                {keptUntil
                  ? `Until ${formatServiceDate(keptUntil)} they keep your name, address and where each yard is; after that the place is kept only as the town and a map position rounded to about a kilometre.`
                  : "The place is kept only as the town and a map position rounded to about a kilometre."}
              </li>
              <li>
                {keptUntil
                  ? `After ${formatServiceDate(keptUntil)}, these records are kept as “Deleted customer”, without your name or contact details.`
                  : "These records are kept as “Deleted customer”, without your name or contact details."}
              </li>
            </ul>
          </div>
        </div>

        {overview.openInvoices.count > 0 ? (
          <p className="mt-4 rounded-lg border-2 border-ochre-500 bg-ochre-100 px-4 py-3">
            You have {count(overview.openInvoices.count, "unpaid invoice", "unpaid invoices")} ({formatCents(overview.openInvoices.cents)}).
            Deleting your account does not cancel what is owed; please pay first, as we can no longer send you reminders or receipts.
          </p>
        ) : null}
        {overview.visitInProgress ? (
          <p className="mt-4 rounded-lg border-2 border-ochre-500 bg-ochre-100 px-4 py-3">
            A crew is treating your colonies right now. You can delete your account once they have finished.
          </p>
        ) : null}

        <Form method="post" className="mt-5 flex max-w-md flex-col gap-4" noValidate>
          <FormMessage message={errors.form} />
          <Field label="Your password" name="password" type="password" autoComplete="current-password" required error={errors.password} />
          <Field
            label={`Type ${word} to confirm`}
            name="confirmation"
            autoComplete="off"
            autoCapitalize="characters"
            spellCheck={false}
            required
            defaultValue={actionData?.confirmation}
            hint="This makes sure nobody deletes the account by accident."
            error={errors.confirmation}
          />
          <Button type="submit" variant="danger" disabled={busy}>
            {busy ? "Deleting…" : "Delete my account"}
          </Button>
        </Form>
      </section>
    </>
  );
}
