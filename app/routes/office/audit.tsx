import type { ReactNode } from "react";
import { Form, Link, useLocation } from "react-router";
import { showingText } from "~/components/data-table/pager";
import { tableHref } from "~/components/data-table/query";
import { Button } from "~/components/ui/button";
import { FormMessage } from "~/components/ui/field";
import { PageHeader } from "~/components/ui/card";
import { Table, Td, Th } from "~/components/ui/table";
import {
  AUDIT_AREA_CHOICES,
  AUDIT_AREA_LABELS,
  MAX_AUDIT_SEARCH,
  formatAuditTime,
  parseAuditQuery,
} from "~/domain/audit-descriptions";
import { auditActors, searchAuditTrail, type AuditTrailRow } from "~/models/audit-trail.server";
import { db } from "~/services/db.server";
import { requireRole } from "~/services/permissions.server";
import type { Route } from "./+types/audit";

export const meta: Route.MetaFunction = () => [{ title: "Audit trail · Varroute" }];

// Owner only: office staff are refused (403) like any other wrong role.
export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, ["owner"]);
  const { query, errors, values } = parseAuditQuery(new URL(request.url).searchParams);
  const [page, actors] = await Promise.all([searchAuditTrail(db, query), auditActors(db)]);
  return { page, actors, errors, values };
}

const inputStyle = "min-h-11 rounded-lg border-2 bg-card px-2 text-base focus:border-pine-600";
const linkStyle = "font-semibold text-pine-800 underline underline-offset-4";

/** A labelled filter with its message under it (tied by aria-describedby). */
function FilterField({
  name,
  label,
  error,
  className = "",
  children,
}: {
  name: string;
  label: string;
  error?: string;
  className?: string;
  children: (props: { id: string; name: string; "aria-invalid"?: true; "aria-describedby"?: string; className: string }) => ReactNode;
}) {
  const id = `audit-${name}`;
  return (
    <div className={`flex flex-col gap-1 ${className}`}>
      <label htmlFor={id} className="font-semibold">
        {label}
      </label>
      {children({
        id,
        name,
        "aria-invalid": error ? true : undefined,
        "aria-describedby": error ? `${id}-error` : undefined,
        className: `${inputStyle} ${error ? "border-alarm-700" : "border-line"}`,
      })}
      {error ? (
        <p id={`${id}-error`} className="max-w-64 text-sm font-semibold text-alarm-700">
          <span aria-hidden="true">⚠ </span>
          {error}
        </p>
      ) : null}
    </div>
  );
}

function Who({ actor }: { actor: AuditTrailRow["actor"] }) {
  if (actor.kind === "system") return <span className="font-semibold">{actor.name}</span>;
  return (
    <>
      <span className="font-semibold">{actor.name || actor.email}</span>
      <span className="block text-sm text-ink-soft">{actor.roleName}</span>
    </>
  );
}

function Details({ row }: { row: AuditTrailRow }) {
  if (row.changes.length === 0) return null;
  return (
    <details className="mt-1">
      <summary className="inline-flex min-h-11 cursor-pointer items-center font-semibold text-pine-800 underline-offset-4 hover:underline">
        Details<span className="sr-only"> of entry {row.id}</span>
      </summary>
      <dl className="mt-1 grid grid-cols-1 gap-x-4 gap-y-1 rounded-lg border border-line bg-pine-50/40 p-3 text-sm sm:grid-cols-[minmax(8rem,auto)_1fr]">
        {row.changes.map((change, i) => (
          <div key={`${change.label}-${i}`} className="contents">
            <dt className="font-semibold">{change.label}</dt>
            <dd className="break-words">
              {change.before !== null && change.after !== null ? (
                <>
                  <span className="text-ink-soft">{change.before}</span>
                  <span aria-hidden="true"> → </span>
                  <span className="sr-only"> changed to </span>
                  <span>{change.after}</span>
                </>
              ) : change.after !== null ? (
                change.after
              ) : (
                <>
                  <span className="sr-only">was </span>
                  <span className="text-ink-soft">{change.before}</span>
                  <span className="text-ink-soft"> (removed)</span>
                </>
              )}
            </dd>
          </div>
        ))}
      </dl>
    </details>
  );
}

/** Page links: first, previous, a few numbers around this page, next, last. */
function PageLinks({ page, pageSize, lastPage, total }: { page: number; pageSize: number; lastPage: number; total: number }) {
  const location = useLocation();
  const href = (p: number) => tableHref(location.pathname, location.search, { page: p === 1 ? null : p });
  const numbers = [...new Set([1, page - 2, page - 1, page, page + 1, page + 2, lastPage])].filter((p) => p >= 1 && p <= lastPage).sort((a, b) => a - b);
  const style = "inline-flex min-h-11 min-w-11 items-center justify-center rounded-lg border-2 px-3 font-semibold";
  const link = (to: number | null, label: string, text: string) =>
    to === null ? (
      <span className={`${style} border-dashed border-line text-ink-soft`}>
        <span aria-hidden="true">{text}</span>
        <span className="sr-only">{label} (none)</span>
      </span>
    ) : (
      <Link to={href(to)} aria-label={label} className={`${style} border-pine-700 bg-card text-pine-800 hover:bg-pine-50`}>
        {text}
      </Link>
    );
  return (
    <div className="mt-3 flex flex-wrap items-center justify-between gap-3">
      <p className="font-semibold" aria-live="polite">
        {showingText(page, pageSize, total, "entries")}
      </p>
      {lastPage > 1 ? (
        <nav aria-label="Pages of the audit trail">
          <ul className="flex flex-wrap items-center gap-1">
            <li>{link(page > 1 ? page - 1 : null, "Previous page", "‹ Previous")}</li>
            {numbers.map((p, i) => (
              <li key={p} className="flex items-center gap-1">
                {i > 0 && p - numbers[i - 1] > 1 ? <span aria-hidden="true">…</span> : null}
                {p === page ? (
                  <span aria-current="page" className={`${style} border-pine-700 bg-pine-700 text-white`}>
                    <span className="sr-only">Page </span>
                    {p.toLocaleString("en-US")}
                  </span>
                ) : (
                  <Link to={href(p)} aria-label={`Page ${p}`} className={`${style} border-line bg-card text-pine-800 hover:bg-pine-50`}>
                    {p.toLocaleString("en-US")}
                  </Link>
                )}
              </li>
            ))}
            <li>{link(page < lastPage ? page + 1 : null, "Next page", "Next ›")}</li>
          </ul>
        </nav>
      ) : null}
    </div>
  );
}

export default function AuditTrail({ loaderData }: Route.ComponentProps) {
  const { page, actors, errors, values } = loaderData;
  const location = useLocation();
  const q = page.query;
  const filtered = q.search !== "" || q.area !== "all" || q.actor !== "all" || q.from !== null || q.to !== null || Object.keys(errors).length > 0;
  const nextSort = q.sort === "newest" ? "oldest" : "newest";
  const sortHref = tableHref(location.pathname, location.search, { sort: nextSort, page: null });
  const clearHref = q.sort === "oldest" ? `${location.pathname}?sort=oldest` : location.pathname;
  const hasErrors = Object.keys(errors).length > 0;
  return (
    <>
      <PageHeader title="Audit trail" subtitle={`Who changed what, and when. Times are in the business's time zone (${page.timeZone}).`} />
      {hasErrors ? <FormMessage message="Some filters were left out: correct the marked fields." /> : null}
      <Form method="get" action={location.pathname} role="search" aria-label="Search the audit trail" className="mt-3 mb-4 flex flex-wrap items-end gap-3">
        <FilterField name="q" label="Search" error={errors.q} className="min-w-64 flex-1">
          {(props) => (
            <input {...props} key={values.q} type="search" defaultValue={values.q} maxLength={MAX_AUDIT_SEARCH} placeholder="Action, record, person, amount, reason…" />
          )}
        </FilterField>
        <FilterField name="area" label="Area" error={errors.area}>
          {(props) => (
            <select {...props} key={values.area} defaultValue={values.area}>
              {AUDIT_AREA_CHOICES.map((area) => (
                <option key={area} value={area}>
                  {area === "all" ? "All areas" : AUDIT_AREA_LABELS[area]}
                </option>
              ))}
              {(AUDIT_AREA_CHOICES as readonly string[]).includes(values.area) ? null : <option value={values.area}>{values.area}</option>}
            </select>
          )}
        </FilterField>
        <FilterField name="actor" label="Who" error={errors.actor}>
          {(props) => (
            <select {...props} key={values.actor} defaultValue={values.actor}>
              <option value="all">Anyone</option>
              <option value="system">System or Stripe (no person)</option>
              {actors.map((a) => (
                <option key={a.id} value={String(a.id)}>
                  {a.name} ({a.roleName})
                </option>
              ))}
              {values.actor === "all" || values.actor === "system" || actors.some((a) => String(a.id) === values.actor) ? null : (
                <option value={values.actor}>{values.actor}</option>
              )}
            </select>
          )}
        </FilterField>
        <FilterField name="from" label="From" error={errors.from}>
          {(props) => <input {...props} key={`from-${values.from}`} type="date" defaultValue={values.from} />}
        </FilterField>
        <FilterField name="to" label="To" error={errors.to}>
          {(props) => <input {...props} key={`to-${values.to}`} type="date" defaultValue={values.to} />}
        </FilterField>
        <FilterField name="sort" label="Order" error={errors.sort}>
          {(props) => (
            <select {...props} key={values.sort} defaultValue={values.sort}>
              <option value="newest">Newest first</option>
              <option value="oldest">Oldest first</option>
              {values.sort === "newest" || values.sort === "oldest" ? null : <option value={values.sort}>{values.sort}</option>}
            </select>
          )}
        </FilterField>
        <Button type="submit">Search</Button>
        {filtered ? (
          <Link to={clearHref} className={`inline-flex min-h-11 items-center px-2 ${linkStyle}`}>
            Clear
          </Link>
        ) : null}
      </Form>
      <Table
        caption="Audit trail entries"
        empty={filtered ? "No entry matches these filters." : "Nothing has been recorded yet."}
        head={
          <>
            <Th sort={q.sort === "newest" ? "descending" : "ascending"} className="p-0">
              <Link to={sortHref} preventScrollReset className="flex min-h-11 items-center gap-1 px-3 py-2 underline-offset-4 hover:underline">
                <span>When</span>
                <span aria-hidden="true" className="inline-block w-4 text-center">
                  {q.sort === "newest" ? "▼" : "▲"}
                </span>
                <span className="sr-only">{`, show ${nextSort} first`}</span>
              </Link>
            </Th>
            <Th>Who</Th>
            <Th>What happened</Th>
            <Th>Record</Th>
          </>
        }
      >
        {page.rows.map((row) => (
          <tr key={row.id} className="align-top">
            <Td className="whitespace-nowrap">
              <time dateTime={row.at}>{formatAuditTime(row.at, page.timeZone)}</time>
            </Td>
            <Td>
              <Who actor={row.actor} />
            </Td>
            <Td className="min-w-72">
              <span>{row.description}</span>
              <span className="block text-sm text-ink-soft">
                {AUDIT_AREA_LABELS[row.area]} · <code>{row.action}</code>
              </span>
              <Details row={row} />
            </Td>
            <Td>
              {row.entity.href ? (
                <Link to={row.entity.href} className={linkStyle}>
                  {row.entity.label}
                </Link>
              ) : (
                row.entity.label
              )}
            </Td>
          </tr>
        ))}
      </Table>
      <PageLinks page={page.page} pageSize={page.pageSize} lastPage={page.lastPage} total={page.total} />
    </>
  );
}
