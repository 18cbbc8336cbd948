import { data, Form, Link, useNavigation } from "react-router";
import { formatCents, formatInstant, formatServiceDate } from "~/components/format";
import { Button, buttonClass } from "~/components/ui/button";
import { Card, PageHeader } from "~/components/ui/card";
import { Field, FormMessage } from "~/components/ui/field";
import { Table, Td, Th, MoneyTotalRows } from "~/components/ui/table";
import {
  fieldErrors,
  formValues,
  type FieldErrors,
} from "~/forms/field-errors";
import { invoiceActionSchema } from "~/forms/office-invoice";
import { invoiceDocument } from "~/models/invoice-documents.server";
import { invoiceEmailLog } from "~/models/invoice-mail.server";
import { resendInvoiceEmail } from "~/models/invoice-resend.server";
import { VoidRefused, voidInvoice } from "~/models/office-invoices.server";
import { loadBusinessSettings } from "~/models/settings.server";
import {
  invoiceBalance,
  PaymentRefused,
  PaymentUnavailable,
  recordOfficePayment,
  refundPayment,
} from "~/models/payments.server";
import { businessToday } from "~/services/clock.server";
import { db } from "~/services/db.server";
import { requestEmailDelivery } from "~/services/jobs.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import { idParam, readForm } from "~/services/request.server";
import type { Route } from "./+types/invoice";

export const meta: Route.MetaFunction = ({ data }) => [
  { title: `Invoice ${data?.invoice.number ?? ""} · Varroute` },
];

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.office);
  const invoiceId = idParam(params.invoiceId, "invoice");
  const doc = await invoiceDocument(db, invoiceId);
  if (!doc) throw data("There is no such invoice.", { status: 404 });
  const [row, money, payments, refunds, emails, today, settings] = await Promise.all([
    db("invoices").where({ id: invoiceId }).first("void_reason"),
    invoiceBalance(db, invoiceId),
    db("payments")
      .where({ invoice_id: invoiceId })
      .orderBy("received_at")
      .orderBy("id")
      .select("id", "amount_cents", "method", "reference", "received_at"),
    db("refunds")
      .join("payments", "payments.id", "refunds.payment_id")
      .where("payments.invoice_id", invoiceId)
      .orderBy("refunds.created_at")
      .select(
        "refunds.id",
        "refunds.payment_id",
        "refunds.amount_cents",
        "refunds.reason",
        "refunds.created_at",
      ),
    invoiceEmailLog(db, invoiceId),
    businessToday(db),
    loadBusinessSettings(db),
  ]);
  return {
    invoice: doc,
    voidReason: row?.void_reason ?? null,
    money,
    overdue: doc.status === "open" && doc.dueOn < today,
    timeZone: settings.timeZone,
    payments: payments.map((p) => {
      const own = refunds.filter((r) => Number(r.payment_id) === Number(p.id));
      const refunded = own.reduce((sum, r) => sum + Number(r.amount_cents), 0);
      return {
        id: Number(p.id),
        amountCents: Number(p.amount_cents),
        method: p.method,
        reference: p.reference,
        receivedAt: new Date(p.received_at).toISOString(),
        refundedCents: refunded,
        refunds: own.map((r) => ({
          id: Number(r.id),
          amountCents: Number(r.amount_cents),
          reason: r.reason,
          createdAt: new Date(r.created_at).toISOString(),
        })),
      };
    }),
    emails: emails.map((e) => ({
      id: Number(e.id),
      to: e.to_address,
      subject: e.subject,
      status: e.status,
      attempts: e.attempts,
      lastError: e.last_error,
      sentAt: e.sent_at ? new Date(e.sent_at).toISOString() : null,
      nextAttemptAt: e.next_attempt_at
        ? new Date(e.next_attempt_at).toISOString()
        : null,
      createdAt: new Date(e.created_at).toISOString(),
    })),
  };
}

type ActionResult = {
  ok: boolean;
  intent: string;
  errors: FieldErrors;
  message?: string;
};

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireRole(request, AREA_ROLES.office);
  const invoiceId = idParam(params.invoiceId, "invoice");
  const values = formValues(await readForm(request));
  const intent = String(values.intent ?? "");
  const parsed = invoiceActionSchema.safeParse(values);
  if (!parsed.success)
    return data<ActionResult>(
      { ok: false, intent, errors: fieldErrors(parsed.error) },
      { status: 400 },
    );
  const input = parsed.data;
  const actorUserId = Number(user.id);
  try {
    if (input.intent === "payment") {
      const result = await recordOfficePayment(db, {
        invoiceId,
        amountCents: input.amountCents,
        method: input.method,
        reference: input.reference || null,
        actorUserId,
      });
      return {
        ok: true,
        intent,
        errors: {},
        message: `Payment of ${formatCents(input.amountCents)} recorded; the invoice is ${result.status}.`,
      } satisfies ActionResult;
    }
    if (input.intent === "refund") {
      const payment = await db("payments")
        .where({ id: input.paymentId, invoice_id: invoiceId })
        .first("id");
      if (!payment)
        return data<ActionResult>(
          {
            ok: false,
            intent,
            errors: { paymentId: "That payment is not on this invoice." },
          },
          { status: 400 },
        );
      await refundPayment(db, {
        paymentId: input.paymentId,
        amountCents: input.amountCents,
        reason: input.reason,
        actorUserId,
      });
      return {
        ok: true,
        intent,
        errors: {},
        message: `Refund of ${formatCents(input.amountCents)} recorded.`,
      } satisfies ActionResult;
    }
    if (input.intent === "void") {
      await voidInvoice(db, { invoiceId, reason: input.reason, actorUserId });
      return {
        ok: true,
        intent,
        errors: {},
        message: "The invoice is void.",
      } satisfies ActionResult;
    }
    const resent = await resendInvoiceEmail(db, { invoiceId, actorUserId });
    if (resent.status !== "queued")
      return data<ActionResult>(
        { ok: false, intent, errors: { form: resent.message } },
        { status: 409 },
      );
    await requestEmailDelivery([resent.emailId]);
    return {
      ok: true,
      intent,
      errors: {},
      message: "The invoice e-mail is queued to be sent again.",
    } satisfies ActionResult;
  } catch (error) {
    if (
      error instanceof PaymentRefused ||
      error instanceof VoidRefused ||
      error instanceof PaymentUnavailable
    ) {
      const field =
        input.intent === "void"
          ? "reason"
          : input.intent === "resend"
            ? "form"
            : "amountCents";
      return data<ActionResult>(
        { ok: false, intent, errors: { [field]: error.message } },
        { status: 409 },
      );
    }
    throw error;
  }
}

const selectStyle =
  "min-h-11 rounded-lg border-2 border-line bg-card px-2 text-base focus:border-pine-600";

export default function OfficeInvoice({
  loaderData,
  actionData,
}: Route.ComponentProps) {
  const { invoice, money, payments, emails, overdue, voidReason } = loaderData;
  // Times in the business's time zone, with its abbreviation.
  const dateTime = (iso: string) => formatInstant(iso, loaderData.timeZone);
  const navigation = useNavigation();
  const busy = navigation.state !== "idle";
  const errorsFor = (intent: string): FieldErrors =>
    actionData && !actionData.ok && actionData.intent === intent
      ? actionData.errors
      : {};
  const refundable = payments.filter((p) => p.amountCents > p.refundedCents);
  const statusText = overdue ? "overdue" : invoice.status;
  return (
    <>
      <PageHeader
        title={`Invoice ${invoice.number}`}
        subtitle={`${invoice.customer.name} · issued ${formatServiceDate(invoice.issuedOn)} · due ${formatServiceDate(invoice.dueOn)} · ${statusText}`}
        actions={
          <>
            <a
              href={`/office/invoices/${invoice.invoiceId}/pdf`}
              className={buttonClass("secondary")}
              target="_blank"
              rel="noreferrer"
            >
              Open the PDF
            </a>
            <Link to="/office/invoices" className={buttonClass("quiet")}>
              All invoices
            </Link>
          </>
        }
      />
      <div className="flex flex-col gap-6">
        {actionData?.ok ? (
          <FormMessage tone="info" message={actionData.message} />
        ) : null}
        {actionData && !actionData.ok && actionData.errors.form ? (
          <FormMessage message={actionData.errors.form} />
        ) : null}
        {invoice.status === "void" ? (
          <FormMessage
            tone="info"
            message={`Void: ${voidReason ?? "no reason recorded"}`}
          />
        ) : null}

        <Card title="Lines">
          <Table
            caption="Invoice lines"
            head={
              <>
                <Th>Description</Th>
                <Th align="right">Quantity</Th>
                <Th align="right">Unit</Th>
                <Th align="right">Amount</Th>
              </>
            }
            foot={
              <MoneyTotalRows
                labelColumns={3}
                rows={[
                  ["Subtotal", invoice.subtotalCents],
                  ["Tax", invoice.taxCents],
                  ["Total", invoice.totalCents],
                  ["Paid (net of refunds)", money.paidCents - money.refundedCents],
                  ["Balance", invoice.status === "void" ? 0 : money.balanceCents],
                ]}
              />
            }
          >
            {invoice.lines.map((line) => (
              <tr key={line.position}>
                <Td>{line.description}</Td>
                <Td align="right">{line.quantity}</Td>
                <Td align="right">{formatCents(line.unitCents)}</Td>
                <Td align="right">{formatCents(line.amountCents)}</Td>
              </tr>
            ))}
          </Table>
        </Card>

        <Card title="Payments and refunds">
          <Table
            caption="Payments"
            empty="No payments yet."
            head={
              <>
                <Th>Received</Th>
                <Th>Method</Th>
                <Th>Reference</Th>
                <Th align="right">Amount</Th>
                <Th>Refunds</Th>
              </>
            }
          >
            {payments.map((p) => (
              <tr key={p.id}>
                <Td className="whitespace-nowrap">{dateTime(p.receivedAt)}</Td>
                <Td>{p.method}</Td>
                <Td>
                  {p.reference ?? <span className="text-ink-soft">—</span>}
                </Td>
                <Td align="right">{formatCents(p.amountCents)}</Td>
                <Td>
                  {p.refunds.length === 0 ? (
                    <span className="text-ink-soft">None</span>
                  ) : (
                    <ul>
                      {p.refunds.map((r) => (
                        <li key={r.id}>
                          {formatCents(r.amountCents)} on{" "}
                          {dateTime(r.createdAt)}: {r.reason}
                        </li>
                      ))}
                    </ul>
                  )}
                </Td>
              </tr>
            ))}
          </Table>
        </Card>

        <div className="grid grid-cols-1 gap-6 lg:grid-cols-2">
          {invoice.status === "open" && money.balanceCents > 0 ? (
            <Card title="Record a cash or cheque payment">
              <Form method="post" className="flex flex-col gap-3">
                <input type="hidden" name="intent" value="payment" />
                <Field
                  label="Amount (dollars)"
                  name="amountCents"
                  inputMode="decimal"
                  required
                  hint={`Still owed: ${formatCents(money.balanceCents)}`}
                  error={errorsFor("payment").amountCents}
                />
                <label className="flex flex-col gap-1 font-semibold">
                  Method
                  <select
                    name="method"
                    defaultValue="cheque"
                    className={selectStyle}
                  >
                    <option value="cheque">Cheque</option>
                    <option value="cash">Cash</option>
                  </select>
                  {errorsFor("payment").method ? (
                    <span className="text-sm text-alarm-700">
                      {errorsFor("payment").method}
                    </span>
                  ) : null}
                </label>
                <Field
                  label="Reference (optional)"
                  name="reference"
                  hint="e.g. the cheque number"
                  error={errorsFor("payment").reference}
                />
                <Button type="submit" disabled={busy}>
                  Record payment
                </Button>
              </Form>
            </Card>
          ) : null}

          {refundable.length > 0 ? (
            <Card title="Refund a payment">
              <Form method="post" className="flex flex-col gap-3">
                <input type="hidden" name="intent" value="refund" />
                <label className="flex flex-col gap-1 font-semibold">
                  Payment
                  <select name="paymentId" className={selectStyle}>
                    {refundable.map((p) => (
                      <option key={p.id} value={p.id}>
                        {p.method} {formatCents(p.amountCents)} (
                        {formatCents(p.amountCents - p.refundedCents)}{" "}
                        refundable)
                      </option>
                    ))}
                  </select>
                  {errorsFor("refund").paymentId ? (
                    <span className="text-sm text-alarm-700">
                      {errorsFor("refund").paymentId}
                    </span>
                  ) : null}
                </label>
                <Field
                  label="Amount (dollars)"
                  name="amountCents"
                  inputMode="decimal"
                  required
                  error={errorsFor("refund").amountCents}
                />
                <Field
                  label="Reason"
                  name="reason"
                  required
                  error={errorsFor("refund").reason}
                />
                <Button type="submit" variant="secondary" disabled={busy}>
                  Refund
                </Button>
              </Form>
            </Card>
          ) : null}

          {invoice.status === "open" && payments.length === 0 ? (
            <Card title="Void the invoice">
              <Form method="post" className="flex flex-col gap-3">
                <input type="hidden" name="intent" value="void" />
                <Field
                  label="Reason"
                  name="reason"
                  required
                  error={errorsFor("void").reason}
                />
                <Button type="submit" variant="danger" disabled={busy}>
                  Void invoice
                </Button>
              </Form>
            </Card>
          ) : null}
        </div>

        <Card
          title="E-mails"
          actions={
            invoice.status !== "void" ? (
              <Form method="post">
                <input type="hidden" name="intent" value="resend" />
                <Button type="submit" variant="secondary" disabled={busy}>
                  Resend the invoice e-mail
                </Button>
              </Form>
            ) : null
          }
        >
          <Table
            caption="E-mails about this invoice"
            empty="No e-mail has been sent for this invoice."
            head={
              <>
                <Th>Queued</Th>
                <Th>To</Th>
                <Th>Subject</Th>
                <Th>Status</Th>
                <Th align="right">Tries</Th>
                <Th>Last error / next try</Th>
              </>
            }
          >
            {emails.map((e) => (
              <tr key={e.id}>
                <Td className="whitespace-nowrap">{dateTime(e.createdAt)}</Td>
                <Td className="break-all">{e.to}</Td>
                <Td>{e.subject}</Td>
                <Td>
                  {e.status === "sent" && e.sentAt
                    ? `sent ${dateTime(e.sentAt)}`
                    : e.status}
                </Td>
                <Td align="right">{e.attempts}</Td>
                <Td>
                  {e.lastError ?? ""}
                  {e.nextAttemptAt && e.status !== "sent"
                    ? ` (next try ${dateTime(e.nextAttemptAt)})`
                    : ""}
                </Td>
              </tr>
            ))}
          </Table>
        </Card>
      </div>
    </>
  );
}
