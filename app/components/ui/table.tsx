import type { ReactNode } from "react";
import { formatCents } from "~/components/format";

/** A plain data table that scrolls sideways on narrow screens instead of breaking the page. */
export function Table({
  caption,
  head,
  children,
  empty,
  foot,
}: {
  caption: string;
  head: ReactNode;
  children: ReactNode;
  empty?: string;
  /** Rows for a `<tfoot>`, e.g. totals (left out when there are no rows). */
  foot?: ReactNode;
}) {
  const hasRows = Array.isArray(children) ? children.length > 0 : Boolean(children);
  return (
    // Focusable so keyboard users can scroll a table wider than a phone screen.
    <div className="overflow-x-auto rounded-xl border border-line bg-card" role="region" aria-label={caption} tabIndex={0}>
      <table className="w-full border-collapse text-left text-sm sm:text-base">
        <caption className="sr-only">{caption}</caption>
        <thead className="bg-pine-50 text-pine-900">
          <tr>{head}</tr>
        </thead>
        <tbody className="divide-y divide-line">
          {hasRows ? (
            children
          ) : (
            <tr>
              <td colSpan={99} className="px-3 py-6 text-center text-ink-soft">
                {empty ?? "Nothing to show."}
              </td>
            </tr>
          )}
        </tbody>
        {foot && hasRows ? <tfoot className="border-t-2 border-pine-700 bg-pine-50 font-semibold text-pine-900">{foot}</tfoot> : null}
      </table>
    </div>
  );
}

export function Th({
  children,
  align = "left",
  sort,
  className = "",
}: {
  children: ReactNode;
  align?: "left" | "right";
  /** The column's sort state, announced to screen readers (aria-sort). */
  sort?: "ascending" | "descending" | "none";
  className?: string;
}) {
  return (
    <th scope="col" aria-sort={sort} className={`px-3 py-2 font-semibold whitespace-nowrap ${align === "right" ? "text-right" : ""} ${className}`}>
      {children}
    </th>
  );
}

export function Td({
  children,
  align = "left",
  className = "",
  colSpan,
}: {
  children: ReactNode;
  align?: "left" | "right";
  className?: string;
  colSpan?: number;
}) {
  return (
    <td colSpan={colSpan} className={`px-3 py-2 ${align === "right" ? "text-right tabular-nums" : ""} ${className}`}>
      {children}
    </td>
  );
}

/** Footer rows of labelled money totals (subtotal, tax, total, …), each label spanning the columns before the amount. */
export function MoneyTotalRows({ rows, labelColumns }: { rows: readonly (readonly [label: string, cents: number])[]; labelColumns: number }) {
  return (
    <>
      {rows.map(([label, cents]) => (
        <tr key={label}>
          <th scope="row" colSpan={labelColumns} className="px-3 py-2 text-right">
            {label}
          </th>
          <Td align="right">{formatCents(cents)}</Td>
        </tr>
      ))}
    </>
  );
}
