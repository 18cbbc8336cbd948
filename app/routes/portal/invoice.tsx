import { data, Link } from "react-router";
import { formatCents, formatInstant, formatServiceDate } from "~/components/format";
import { buttonClass } from "~/components/ui/button";
import { Card, PageHeader } from "~/components/ui/card";
import { Table, Td, Th, MoneyTotalRows } from "~/components/ui/table";
import { customerInvoice, type PortalInvoiceStatus } from "~/models/portal-invoices.server";
import { db } from "~/services/db.server";
import { payLinkToken } from "~/services/pay-link.server";
import { requireCustomer } from "~/services/permissions.server";
import { idParam } from "~/services/request.server";
import type { Route } from "./+types/invoice";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Invoice ${data?.invoice.number ?? ""} · Varroute` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireCustomer(request);
  const invoice = await customerInvoice(db, user.customerId, idParam(params.invoiceId, "invoice"));
  if (!invoice) throw data("There is no such invoice in your account.", { status: 404 });
  // The status comes from the database on every load (a card payment shows once its webhook landed).
  return { invoice, payPath: invoice.payable ? `/pay/${payLinkToken(invoice.invoiceId)}` : null };
}

const BADGE_STYLE: Record<PortalInvoiceStatus, string> = {
  overdue: "border-alarm-700 bg-alarm-100 text-alarm-700",
  open: "border-ochre-700 bg-ochre-100 text-ink",
  paid: "border-pine-700 bg-pine-50 text-pine-900",
  void: "border-line bg-card text-ink-soft",
  refunded: "border-line bg-card text-ink-soft",
};

const STATUS_NOTE: Record<PortalInvoiceStatus, string> = {
  open: "This invoice is waiting to be paid.",
  overdue: "This invoice is past its due date. Please pay it as soon as you can, or call us if something is wrong.",
  paid: "This invoice is paid. Thank you.",
  void: "This invoice was cancelled. You do not need to pay it.",
  refunded: "The money you paid on this invoice was given back to you.",
};

export default function PortalInvoice({ loaderData }: Route.ComponentProps) {
  const { invoice, payPath } = loaderData;
  const when = (instant: Date | string) => formatInstant(instant, invoice.timeZone);
  return (
    <>
      <Link to="/portal/invoices" className="mb-3 inline-flex min-h-11 items-center font-semibold text-pine-800 underline underline-offset-4">
        ← All your invoices
      </Link>
      <PageHeader
        title={`Invoice ${invoice.number}`}
        subtitle={`Issued ${formatServiceDate(invoice.issuedOn)} · due ${formatServiceDate(invoice.dueOn)}`}
        actions={
          <a href={`/portal/invoices/${invoice.invoiceId}/pdf`} className={buttonClass("secondary")}>
            Download PDF
          </a>
        }
      />

      <div className="flex flex-col gap-6">
        <Card title="Where this invoice stands">
          <div className="flex flex-col gap-4 sm:flex-row sm:items-center sm:justify-between">
            <div>
              <p className="text-lg">
                Status:{" "}
                <span className={`inline-block rounded-full border px-2.5 py-0.5 font-semibold whitespace-nowrap ${BADGE_STYLE[invoice.displayStatus]}`} data-testid="invoice-status">
                  {invoice.statusLabel}
                </span>
              </p>
              <p className="mt-2 text-2xl font-bold tabular-nums">
                Still to pay: <span data-testid="balance">{formatCents(invoice.balanceCents)}</span>
              </p>
              <p className="mt-1 text-ink-soft">{STATUS_NOTE[invoice.displayStatus]}</p>
              <p className="mt-1 text-ink-soft">
                {invoice.emailed.sentAt
                  ? `We e-mailed this invoice to you on ${when(invoice.emailed.sentAt)}.`
                  : "This invoice has not been e-mailed to you; you can download it here."}
              </p>
            </div>
            {payPath ? (
              <a href={payPath} className={buttonClass("primary", "min-h-14 px-8 text-lg")}>
                Pay {formatCents(invoice.balanceCents)} by card
              </a>
            ) : null}
          </div>
        </Card>

        <Card title="What you are charged for">
          {invoice.visit ? (
            <div className="mb-3">
              <p>
                Treatment at {invoice.visit.yardName} on {formatServiceDate(invoice.visit.serviceDate)}
                {invoice.visit.roundsPlanned > 1 ? `, round ${invoice.visit.roundNumber} of ${invoice.visit.roundsPlanned}` : ""}.
              </p>
              <Link to={`/portal/visits/${invoice.visit.id}`} className="inline-flex min-h-11 items-center font-semibold text-pine-800 underline underline-offset-4">
                See the visit report
              </Link>
            </div>
          ) : null}
          <Table
            caption={`Charges on invoice ${invoice.number}`}
            empty="No charges."
            head={
              <>
                <Th>Item</Th>
                <Th align="right">Qty</Th>
                <Th align="right">Amount</Th>
              </>
            }
            foot={
              <MoneyTotalRows
                labelColumns={2}
                rows={[
                  ["Subtotal", invoice.subtotalCents],
                  ["Tax", invoice.taxCents],
                  ["Total", invoice.totalCents],
                  ["Paid (less any refunds)", invoice.paidCents],
                  ["Still to pay", invoice.balanceCents],
                ]}
              />
            }
          >
            {invoice.lines.map((line) => (
              <tr key={line.position}>
                <Td>{line.description}</Td>
                <Td align="right">{line.quantity}</Td>
                <Td align="right">{formatCents(line.amountCents)}</Td>
              </tr>
            ))}
          </Table>
        </Card>

        <Card
          title="Receipts"
          actions={
            invoice.payments.length > 0 ? (
              <a href={`/portal/invoices/${invoice.invoiceId}/receipt`} className={buttonClass("secondary")}>
                Download receipt (PDF)
              </a>
            ) : null
          }
        >
          {invoice.payments.length === 0 ? (
            <p>No payment has been received for this invoice yet.</p>
          ) : (
            <ul className="flex flex-col gap-3" aria-label={`Payments on invoice ${invoice.number}`}>
              {invoice.payments.map((p) => (
                <li key={p.id} className="rounded-lg border border-line p-3">
                  <dl className="grid grid-cols-2 gap-x-4 gap-y-2 md:grid-cols-5">
                    <div className="max-md:col-span-2">
                      <dt className="text-sm text-ink-soft">Received</dt>
                      <dd>{when(p.receivedAt)}</dd>
                    </div>
                    <div>
                      <dt className="text-sm text-ink-soft">How</dt>
                      <dd>{p.methodName}</dd>
                    </div>
                    <div>
                      <dt className="text-sm text-ink-soft">Reference</dt>
                      <dd className="break-all">{p.reference ?? "None"}</dd>
                    </div>
                    <div>
                      <dt className="text-sm text-ink-soft">Amount</dt>
                      <dd className="font-semibold tabular-nums">{formatCents(p.amountCents)}</dd>
                    </div>
                    <div>
                      <dt className="text-sm text-ink-soft">Refunds</dt>
                      <dd>
                        {p.refunds.length === 0 ? (
                          "None"
                        ) : (
                          <ul>
                            {p.refunds.map((r) => (
                              <li key={r.id}>
                                {formatCents(r.amountCents)} given back on {when(r.createdAt)}
                              </li>
                            ))}
                          </ul>
                        )}
                      </dd>
                    </div>
                  </dl>
                </li>
              ))}
            </ul>
          )}
        </Card>
      </div>
    </>
  );
}
