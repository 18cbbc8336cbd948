import { Form, Link, useLocation } from "react-router";
import { buttonClass } from "~/components/ui/button";
import { PAGE_SIZES, tableHref } from "./query";

const count = (n: number) => n.toLocaleString("en-US");

/** "Showing 26–50 of 312 customers" (or that none were found). */
export function showingText(page: number, pageSize: number, total: number, noun: string) {
  if (total === 0) return `No ${noun} found`;
  const first = (page - 1) * pageSize + 1;
  const last = Math.min(total, page * pageSize);
  return `Showing ${count(first)}–${count(last)} of ${count(total)} ${noun}`;
}

function PageLink({ to, label, children }: { to: string | null; label: string; children: string }) {
  const style = "inline-flex min-h-11 min-w-11 items-center justify-center rounded-lg border-2 px-3 font-semibold";
  if (!to) {
    return (
      <span className={`${style} border-dashed border-line text-ink-soft`}>
        <span aria-hidden="true">{children}</span>
        <span className="sr-only">{label} (none)</span>
      </span>
    );
  }
  return (
    <Link to={to} aria-label={label} className={`${style} border-pine-700 bg-card text-pine-800 hover:bg-pine-50`}>
      {children}
    </Link>
  );
}

/**
 * Where the reader is in a long table and the way to other pages: previous / next links and
 * a GET form for rows per page. Everything is in the URL, so it works without JavaScript.
 */
export function Pager({ page, pageSize, total, noun }: { page: number; pageSize: number; total: number; noun: string }) {
  const location = useLocation();
  const lastPage = Math.max(1, Math.ceil(total / pageSize));
  const href = (p: number) => tableHref(location.pathname, location.search, { page: p === 1 ? null : p });
  // The page-size form keeps every other parameter of the table and starts again at page 1.
  const kept = [...new URLSearchParams(location.search).entries()].filter(([key]) => key !== "size" && key !== "page");
  return (
    <div className="mt-3 flex flex-wrap items-center justify-between gap-3">
      <p className="font-semibold" aria-live="polite">
        {showingText(page, pageSize, total, noun)}
      </p>
      <div className="flex flex-wrap items-center gap-3">
        {lastPage > 1 ? (
          <nav aria-label={`Pages of ${noun}`} className="flex items-center gap-1">
            <PageLink to={page > 1 ? href(1) : null} label="First page">«</PageLink>
            <PageLink to={page > 1 ? href(page - 1) : null} label="Previous page">‹ Previous</PageLink>
            <span className="px-2 whitespace-nowrap" aria-current="page">
              Page {count(page)} of {count(lastPage)}
            </span>
            <PageLink to={page < lastPage ? href(page + 1) : null} label="Next page">Next ›</PageLink>
            <PageLink to={page < lastPage ? href(lastPage) : null} label="Last page">»</PageLink>
          </nav>
        ) : null}
        <Form method="get" action={location.pathname} preventScrollReset className="flex items-end gap-2">
          {kept.map(([key, value]) => (
            <input key={key} type="hidden" name={key} value={value} />
          ))}
          <label className="flex items-center gap-2 font-semibold">
            Rows per page
            <select
              name="size"
              defaultValue={String(pageSize)}
              key={pageSize}
              onChange={(event) => event.currentTarget.form?.requestSubmit()}
              className="min-h-11 rounded-lg border-2 border-line bg-card px-2 text-base"
            >
              {PAGE_SIZES.map((size) => (
                <option key={size} value={size}>
                  {size}
                </option>
              ))}
            </select>
          </label>
          <button type="submit" className={buttonClass("secondary", "px-3")}>
            Show
          </button>
        </Form>
      </div>
    </div>
  );
}
