import { useId, type ReactNode } from "react";
import { Form, Link, useLocation } from "react-router";
import { Button } from "~/components/ui/button";

/** Parameters a search keeps from the current URL: the sort order and the page size. */
const KEPT = ["sort", "dir", "size"];

/**
 * A GET form that filters a table: a labelled search box, any further filters passed as
 * children (named fields), a submit button and a link that clears the filters. A new search
 * starts at page 1; the sort and the page size stay.
 */
export function SearchForm({
  label,
  search,
  hint,
  placeholder,
  filtered,
  filterNames = [],
  children,
}: {
  label: string;
  search: string;
  hint?: string;
  placeholder?: string;
  /** Whether any filter is on (shows "Clear"). */
  filtered: boolean;
  /** Names of the extra filter fields among the children (cleared along with the search). */
  filterNames?: string[];
  children?: ReactNode;
}) {
  const id = useId();
  const location = useLocation();
  const params = new URLSearchParams(location.search);
  const kept = KEPT.flatMap((key) => (params.has(key) ? [[key, params.get(key)!] as const] : []));
  const clearParams = new URLSearchParams(kept.map(([k, v]) => [k, v]));
  for (const name of filterNames) clearParams.delete(name);
  const clearHref = clearParams.size ? `${location.pathname}?${clearParams}` : location.pathname;
  return (
    <Form method="get" action={location.pathname} role="search" aria-label={label} className="mb-4 flex flex-wrap items-end gap-3">
      {kept.map(([key, value]) => (
        <input key={key} type="hidden" name={key} value={value} />
      ))}
      <div className="flex min-w-64 flex-1 flex-col gap-1">
        <label htmlFor={id} className="font-semibold">
          {label}
        </label>
        {hint ? (
          <p id={`${id}-hint`} className="text-sm text-ink-soft">
            {hint}
          </p>
        ) : null}
        <input
          id={id}
          key={search}
          type="search"
          name="q"
          defaultValue={search}
          placeholder={placeholder}
          maxLength={100}
          aria-describedby={hint ? `${id}-hint` : undefined}
          className="min-h-11 rounded-lg border-2 border-line bg-card px-3 text-base focus:border-pine-600"
        />
      </div>
      {children}
      <Button type="submit">Search</Button>
      {filtered ? (
        <Link to={clearHref} className="inline-flex min-h-11 items-center px-2 font-semibold text-pine-800 underline underline-offset-4">
          Clear
        </Link>
      ) : null}
    </Form>
  );
}
