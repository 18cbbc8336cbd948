import { data, Form, redirect, useNavigation } from "react-router";
import { formatCents, formatServiceDate } from "~/components/format";
import { Button } from "~/components/ui/button";
import { Card } from "~/components/ui/card";
import { FormMessage } from "~/components/ui/field";
import { Table, Td, Th } from "~/components/ui/table";
import { invoiceDocument } from "~/models/invoice-documents.server";
import { PaymentRefused, PaymentUnavailable, startCardPayment } from "~/models/payments.server";
import { db } from "~/services/db.server";
import { serverEnv } from "~/services/env.server";
import { verifyPayLinkToken } from "~/services/pay-link.server";
import type { Route } from "./+types/pay";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Invoice ${data?.invoice.number ?? ""} · Varroute` }];

// The pay link from the invoice e-mail: the signed token is the key, no sign-in needed.
async function invoiceForToken(token: string) {
  const verified = verifyPayLinkToken(token);
  if (!verified.ok) {
    throw data(verified.reason === "expired" ? "This pay link has expired. Sign in to your portal to pay, or ask the office for a new link." : "This pay link is not valid.", {
      status: 404,
    });
  }
  const invoice = await invoiceDocument(db, verified.invoiceId);
  if (!invoice) throw data("This pay link is not valid.", { status: 404 });
  return invoice;
}

export async function loader({ params, request }: Route.LoaderArgs) {
  const invoice = await invoiceForToken(params.token);
  const url = new URL(request.url);
  return { invoice, returned: url.searchParams.has("returned"), cancelled: url.searchParams.has("cancelled") };
}

export async function action({ params }: Route.ActionArgs) {
  const invoice = await invoiceForToken(params.token);
  const back = `${serverEnv().APP_URL}/pay/${params.token}`;
  try {
    const start = await startCardPayment(db, { invoiceId: invoice.invoiceId, successUrl: `${back}?returned=1`, cancelUrl: `${back}?cancelled=1` });
    throw redirect(start.url);
  } catch (error) {
    if (error instanceof PaymentUnavailable) return data({ message: error.message }, { status: 503 });
    // Nothing to pay, or a payment already made is still being confirmed.
    if (error instanceof PaymentRefused) return data({ message: error.message }, { status: 409 });
    throw error;
  }
}

const STATUS: Record<string, string> = { open: "Open", paid: "Paid", void: "Void", refunded: "Refunded" };

export default function Pay({ loaderData, actionData }: Route.ComponentProps) {
  const { invoice, returned, cancelled } = loaderData;
  const busy = useNavigation().state !== "idle";
  const payable = invoice.status === "open" && invoice.balanceCents > 0;
  return (
    <div className="mx-auto max-w-2xl px-4 py-8">
      <h1 className="text-3xl font-bold">Invoice {invoice.number}</h1>
      <p className="mt-1 text-ink-soft">
        {invoice.businessName} · issued {formatServiceDate(invoice.issuedOn)} · due {formatServiceDate(invoice.dueOn)}
      </p>
      <div className="mt-4 flex flex-col gap-3">
        {returned && invoice.status !== "paid" ? <FormMessage tone="info" message="Thank you. Your payment is being confirmed; this page shows it as paid in a moment." /> : null}
        {cancelled ? <FormMessage tone="info" message="Payment cancelled. Nothing was charged." /> : null}
        <FormMessage message={actionData?.message} />
      </div>
      <Card className="mt-4">
        <p className="text-lg">
          {invoice.customer.name}
          {invoice.visit ? ` · ${invoice.visit.yardName}, ${formatServiceDate(invoice.visit.serviceDate)}` : ""}
        </p>
        <div className="mt-3">
          <Table
            caption={`Invoice ${invoice.number}`}
            head={
              <>
                <Th>Item</Th>
                <Th align="right">Qty</Th>
                <Th align="right">Amount</Th>
              </>
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
        </div>
        <dl className="mt-3 grid grid-cols-2 gap-1 text-right">
          <dt>Subtotal</dt>
          <dd className="tabular-nums">{formatCents(invoice.subtotalCents)}</dd>
          <dt>Tax</dt>
          <dd className="tabular-nums">{formatCents(invoice.taxCents)}</dd>
          <dt className="font-bold">Total</dt>
          <dd className="font-bold tabular-nums">{formatCents(invoice.totalCents)}</dd>
          <dt>Paid</dt>
          <dd className="tabular-nums">{formatCents(invoice.paidCents)}</dd>
          <dt className="text-lg font-bold">Balance</dt>
          <dd className="text-lg font-bold tabular-nums" data-testid="balance">
            {formatCents(invoice.balanceCents)}
          </dd>
        </dl>
        <p className="mt-3 text-lg font-bold" data-testid="invoice-status">
          {STATUS[invoice.status] ?? invoice.status}
        </p>
        {payable ? (
          <Form method="post" className="mt-3">
            <Button type="submit" disabled={busy}>
              {busy ? "Opening the card payment…" : `Pay ${formatCents(invoice.balanceCents)} by card`}
            </Button>
          </Form>
        ) : null}
      </Card>
    </div>
  );
}
