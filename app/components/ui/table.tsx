import type { ReactNode } from "react";

/** A plain data table that scrolls sideways on narrow screens instead of breaking the page. */
export function Table({ caption, head, children, empty }: { caption: string; head: ReactNode; children: ReactNode; empty?: string }) {
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
      </table>
    </div>
  );
}

export function Th({ children, align = "left" }: { children: ReactNode; align?: "left" | "right" }) {
  return (
    <th scope="col" className={`px-3 py-2 font-semibold whitespace-nowrap ${align === "right" ? "text-right" : ""}`}>
      {children}
    </th>
  );
}

export function Td({ children, align = "left", className = "" }: { children: ReactNode; align?: "left" | "right"; className?: string }) {
  return <td className={`px-3 py-2 ${align === "right" ? "text-right tabular-nums" : ""} ${className}`}>{children}</td>;
}
