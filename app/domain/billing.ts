/**
 * Billing: what a finished visit costs, in integer cents, and invoice numbers.
 *
 * A visit is charged per colony treated (counted from the crew's tally, never from the
 * booking), plus one trip fee for the yard. When those two come to less than the business's
 * minimum per visit, a "minimum" line tops the subtotal up to the minimum. Tax is charged on
 * the subtotal.
 *
 * Money is whole cents throughout; no amount ever passes through a binary fraction.
 *
 * THE rounding rule (the only one): tax = the subtotal × the tax rate, rounded half up to the
 * whole cent, computed once on the subtotal (never per line):
 *
 *     taxCents = floor((subtotalCents × basisPoints + 5000) / 10000)
 *
 * e.g. 8 % (800 bp) of $10.00 is 80 ¢ exactly; 8 % of $0.06 is 0.48 ¢ → 0 ¢; 5 % (500 bp) of
 * $0.30 is 1.5 ¢ → 2 ¢ (exactly half a cent goes up); 8.75 % (875 bp) of $0.40 is 3.5 ¢ → 4 ¢.
 * The product is computed with BigInt, so it stays exact for any subtotal. Worked examples
 * are in tests/unit/billing.test.ts.
 */

export type InvoiceLineKind = "colony" | "trip_fee" | "minimum";

export interface InvoiceLineDraft {
  kind: InvoiceLineKind;
  description: string;
  quantity: number;
  unitCents: number;
  amountCents: number;
}

export interface InvoiceDraft {
  lines: InvoiceLineDraft[];
  subtotalCents: number;
  taxCents: number;
  totalCents: number;
}

export interface VisitPricing {
  /** Colonies with the outcome "treated" on the visit's tally. */
  coloniesTreated: number;
  pricePerColonyCents: number;
  /** Charged once per yard visit. */
  tripFeeCents: number;
  /** The least a visit is invoiced for before tax (0 = no minimum). */
  minimumPerVisitCents: number;
  /** Tax rate in hundredths of a percent (800 = 8 %). */
  taxRateBasisPoints: number;
}

/** Words for the invoice lines; all optional. */
export interface InvoiceWording {
  yardName?: string | null;
  roundNumber?: number | null;
  roundsPlanned?: number | null;
}

const BASIS_POINTS_PER_WHOLE = 10_000;
/** Largest tax rate accepted: 100 %. */
const MAX_TAX_BASIS_POINTS = 10_000;

function assertCents(value: number, what: string): void {
  if (!Number.isSafeInteger(value) || value < 0) {
    throw new RangeError(`${what} must be a whole number of cents ≥ 0, got ${value}`);
  }
}

function assertCount(value: number, what: string): void {
  if (!Number.isSafeInteger(value) || value < 0) throw new RangeError(`${what} must be a whole number ≥ 0, got ${value}`);
}

function safeCents(value: bigint, what: string): number {
  if (value > BigInt(Number.MAX_SAFE_INTEGER)) throw new RangeError(`${what} is too large to invoice`);
  return Number(value);
}

/** Tax on a subtotal: subtotal × rate, rounded half up to the whole cent (see the file comment). */
export function taxCentsOn(subtotalCents: number, taxRateBasisPoints: number): number {
  assertCents(subtotalCents, "the subtotal");
  if (!Number.isInteger(taxRateBasisPoints) || taxRateBasisPoints < 0 || taxRateBasisPoints > MAX_TAX_BASIS_POINTS) {
    throw new RangeError(`the tax rate must be a whole number of basis points from 0 to ${MAX_TAX_BASIS_POINTS}, got ${taxRateBasisPoints}`);
  }
  // BigInt division truncates toward zero, which for non-negative values is floor.
  const numerator = BigInt(subtotalCents) * BigInt(taxRateBasisPoints) + BigInt(BASIS_POINTS_PER_WHOLE / 2);
  return safeCents(numerator / BigInt(BASIS_POINTS_PER_WHOLE), "the tax");
}

/** "$1,234.56" from whole cents, without floating point. */
export function formatDollars(cents: number): string {
  assertCents(cents, "the amount");
  const dollars = Math.floor(cents / 100);
  const rest = cents % 100;
  return `$${dollars.toLocaleString("en-US")}.${String(rest).padStart(2, "0")}`;
}

function coloniesText(count: number): string {
  return `${count} ${count === 1 ? "colony" : "colonies"}`;
}

/**
 * The invoice for one finished visit: a colony line (colonies treated × price; left out when
 * none was treated), the trip fee line (left out when the fee is 0), a "minimum" top-up line
 * when colonies + trip fee come to less than the minimum, then subtotal, tax and total.
 */
export function invoiceForVisit(pricing: VisitPricing, wording: InvoiceWording = {}): InvoiceDraft {
  assertCount(pricing.coloniesTreated, "colonies treated");
  assertCents(pricing.pricePerColonyCents, "the price per colony");
  assertCents(pricing.tripFeeCents, "the trip fee");
  assertCents(pricing.minimumPerVisitCents, "the minimum per visit");

  const lines: InvoiceLineDraft[] = [];
  const colonyCents = safeCents(BigInt(pricing.coloniesTreated) * BigInt(pricing.pricePerColonyCents), "the colony amount");
  if (pricing.coloniesTreated > 0) {
    const round =
      wording.roundNumber && wording.roundsPlanned ? `, round ${wording.roundNumber} of ${wording.roundsPlanned}` : wording.roundNumber ? `, round ${wording.roundNumber}` : "";
    lines.push({
      kind: "colony",
      description: `Oxalic acid vapor treatment${round}: ${coloniesText(pricing.coloniesTreated)} × ${formatDollars(pricing.pricePerColonyCents)}`,
      quantity: pricing.coloniesTreated,
      unitCents: pricing.pricePerColonyCents,
      amountCents: colonyCents,
    });
  }
  if (pricing.tripFeeCents > 0) {
    lines.push({
      kind: "trip_fee",
      description: wording.yardName?.trim() ? `Trip fee: ${wording.yardName.trim()}` : "Trip fee",
      quantity: 1,
      unitCents: pricing.tripFeeCents,
      amountCents: pricing.tripFeeCents,
    });
  }
  const charged = colonyCents + pricing.tripFeeCents;
  if (charged < pricing.minimumPerVisitCents) {
    const topUp = pricing.minimumPerVisitCents - charged;
    lines.push({
      kind: "minimum",
      description: `Minimum charge per visit (${formatDollars(pricing.minimumPerVisitCents)}): top-up`,
      quantity: 1,
      unitCents: topUp,
      amountCents: topUp,
    });
  }
  const subtotalCents = lines.reduce((sum, line) => sum + line.amountCents, 0);
  if (!Number.isSafeInteger(subtotalCents)) throw new RangeError("the subtotal is too large to invoice");
  const taxCents = taxCentsOn(subtotalCents, pricing.taxRateBasisPoints);
  const totalCents = subtotalCents + taxCents;
  if (!Number.isSafeInteger(totalCents)) throw new RangeError("the total is too large to invoice");
  return { lines, subtotalCents, taxCents, totalCents };
}

/** Invoice number "YYYY-NNNN": the year, then the year's sequence with at least 4 digits. */
export function formatInvoiceNumber(year: number, sequence: number): string {
  if (!Number.isInteger(year) || year < 1 || year > 9999) throw new RangeError(`year must be from 1 to 9999, got ${year}`);
  if (!Number.isSafeInteger(sequence) || sequence < 1) throw new RangeError(`sequence must be a whole number ≥ 1, got ${sequence}`);
  return `${String(year).padStart(4, "0")}-${String(sequence).padStart(4, "0")}`;
}
