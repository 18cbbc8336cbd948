import { Link, useLocation } from "react-router";
import { Th } from "~/components/ui/table";
import { tableHref, type SortDir } from "./query";

/**
 * A column header that sorts the table by this column: a link that sets `sort` and `dir`
 * in the URL and goes back to page 1. Selecting the sorted column again reverses it.
 */
export function SortableHeader({
  column,
  label,
  sort,
  dir,
  align = "left",
  firstDir = "asc",
}: {
  column: string;
  label: string;
  /** The column the table is sorted by now, and the direction. */
  sort: string;
  dir: SortDir;
  align?: "left" | "right";
  /** The direction of the first click (numbers and money read best largest first). */
  firstDir?: SortDir;
}) {
  const location = useLocation();
  const active = sort === column;
  const nextDir: SortDir = active ? (dir === "asc" ? "desc" : "asc") : firstDir;
  const href = tableHref(location.pathname, location.search, { sort: column, dir: nextDir, page: null });
  const state = active ? (dir === "asc" ? "ascending" : "descending") : "none";
  return (
    <Th align={align} sort={state} className="p-0">
      <Link
        to={href}
        preventScrollReset
        className={`flex min-h-11 items-center gap-1 px-3 py-2 underline-offset-4 hover:underline focus-visible:outline-2 focus-visible:outline-offset-[-2px] focus-visible:outline-pine-700 ${align === "right" ? "justify-end" : ""}`}
      >
        <span>{label}</span>
        <span aria-hidden="true" className={`inline-block w-4 text-center ${active ? "" : "font-normal text-ink-soft"}`}>
          {active ? (dir === "asc" ? "▲" : "▼") : "↕"}
        </span>
        <span className="sr-only">{`, sort ${nextDir === "asc" ? "ascending" : "descending"}`}</span>
      </Link>
    </Th>
  );
}
