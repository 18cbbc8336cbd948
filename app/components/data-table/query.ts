// A data table's state lives in the URL (q, sort, dir, page, size), so sorting, searching
// and paging are plain links and GET forms that work without JavaScript and can be
// bookmarked. This file is shared by loaders (reading the URL) and components (writing links).

export const PAGE_SIZES = [25, 50, 100] as const;
export const DEFAULT_PAGE_SIZE = 25;
export const MAX_SEARCH_LENGTH = 100;

export type SortDir = "asc" | "desc";

export type TableQuery<S extends string = string> = {
  search: string;
  sort: S;
  dir: SortDir;
  page: number;
  pageSize: number;
};

/** A page of rows with the query actually applied (sort and page after clamping). */
export type TablePage<Row, Totals, S extends string = string> = TableQuery<S> & {
  rows: Row[];
  total: number;
  totals: Totals;
};

function positiveInt(value: string | null, fallback: number): number {
  if (!value || !/^\d{1,9}$/.test(value)) return fallback;
  const n = Number(value);
  return n >= 1 ? n : fallback;
}

/** The table's query from the URL; anything unknown or malformed falls back to the default. */
export function readTableQuery<S extends string>(
  source: URL | URLSearchParams,
  sorts: readonly S[],
  defaults: { sort: S; dir?: SortDir },
): TableQuery<S> {
  const params = source instanceof URL ? source.searchParams : source;
  const sortParam = params.get("sort");
  const sort = sortParam && (sorts as readonly string[]).includes(sortParam) ? (sortParam as S) : defaults.sort;
  const dirParam = params.get("dir");
  const dir: SortDir = dirParam === "asc" || dirParam === "desc" ? dirParam : (defaults.dir ?? "asc");
  const size = positiveInt(params.get("size"), DEFAULT_PAGE_SIZE);
  return {
    search: (params.get("q") ?? "").trim().slice(0, MAX_SEARCH_LENGTH),
    sort,
    dir,
    page: positiveInt(params.get("page"), 1),
    pageSize: (PAGE_SIZES as readonly number[]).includes(size) ? size : DEFAULT_PAGE_SIZE,
  };
}

/** A link to `pathname` with the current search params, some changed (null or "" removes one). */
export function tableHref(pathname: string, current: URLSearchParams | string, changes: Record<string, string | number | null>): string {
  const params = new URLSearchParams(current);
  for (const [key, value] of Object.entries(changes)) {
    if (value === null || value === "") params.delete(key);
    else params.set(key, String(value));
  }
  const text = params.toString();
  return text ? `${pathname}?${text}` : pathname;
}
