import { useEffect, useId, useRef, useState, type ChangeEvent } from "react";
import { data, Form, Link, useNavigation } from "react-router";
import {
  FormDataParseError,
  MaxFileSizeExceededError,
  MaxFilesExceededError,
  MaxTotalSizeExceededError,
  MultipartParseError,
  parseFormData,
} from "@remix-run/form-data-parser";
import { Button, buttonClass } from "~/components/ui/button";
import { Card, PageHeader } from "~/components/ui/card";
import { FormMessage } from "~/components/ui/field";
import { Table, Td, Th } from "~/components/ui/table";
import {
  checkCustomerCsv,
  CUSTOMER_CSV_COLUMNS,
  CUSTOMER_CSV_HELP,
  MAX_IMPORT_BYTES,
  MAX_IMPORT_ROWS,
  type CustomerCsvCheck,
  type CustomerCsvProgress,
  type ImportRowError,
} from "~/forms/customer-import";
import { importCustomersCsv } from "~/models/customer-import.server";
import { db } from "~/services/db.server";
import { AREA_ROLES, requireRole } from "~/services/permissions.server";
import { requireFormBody } from "~/services/request.server";
import type { Route } from "./+types/customers-import";

export const meta: Route.MetaFunction = () => [{ title: "Import customers · Varroute" }];

const MB = MAX_IMPORT_BYTES / 1024 / 1024;
const TOO_LARGE = `The file is larger than ${MB} MB; split it into smaller files and import them one by one.`;

export async function loader({ request }: Route.LoaderArgs) {
  await requireRole(request, AREA_ROLES.office);
  return { maxRows: MAX_IMPORT_ROWS };
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireRole(request, AREA_ROLES.office);
  // JSON or text is a 400 before the parser sees it (it would hand such a body to formData()).
  requireFormBody(request);
  let form: FormData;
  try {
    form = await parseFormData(request, { maxFileSize: MAX_IMPORT_BYTES, maxFiles: 1 });
  } catch (error) {
    // Anything the parser refuses (a body cut short, no boundary, too many parts) is the
    // upload's fault: 400 with a message at the file field. Anything else is a real error.
    const fileError =
      error instanceof MaxFileSizeExceededError || error instanceof MaxTotalSizeExceededError ? TOO_LARGE
      : error instanceof MaxFilesExceededError ? "Choose one file at a time."
      : error instanceof FormDataParseError || error instanceof MultipartParseError ? "The upload could not be read. Choose the file again."
      : null;
    if (fileError === null) throw error;
    return data({ fileError, fileName: null, errors: null, totalErrors: 0, imported: null }, { status: 400 });
  }
  const file = form.get("file");
  if (!(file instanceof File) || file.size === 0) {
    return data({ fileError: "Choose a CSV file to import.", fileName: null, errors: null, totalErrors: 0, imported: null }, { status: 400 });
  }
  if (!/\.(csv|txt)$/i.test(file.name) && !/^text\//.test(file.type)) {
    return data({ fileError: "Choose a CSV file (saved from a spreadsheet as “CSV UTF-8”).", fileName: file.name, errors: null, totalErrors: 0, imported: null }, { status: 400 });
  }
  const result = await importCustomersCsv(db, await file.text(), user.id);
  if (!result.ok) {
    return data({ fileError: null, fileName: file.name, errors: result.errors, totalErrors: result.totalErrors, imported: null }, { status: 400 });
  }
  return { fileError: null, fileName: file.name, errors: null, totalErrors: 0, imported: result };
}

type CheckState =
  | { status: "idle" }
  | { status: "checking"; fileName: string; progress: CustomerCsvProgress | null }
  | { status: "refused"; fileName: string; message: string }
  | { status: "checked"; fileName: string; check: CustomerCsvCheck };

const count = (n: number) => n.toLocaleString("en-US");
const plural = (n: number, one: string, many = `${one}s`) => `${count(n)} ${n === 1 ? one : many}`;

function ProblemsTable({ errors, totalErrors, caption }: { errors: ImportRowError[]; totalErrors: number; caption: string }) {
  return (
    <>
      {totalErrors > errors.length ? (
        <p className="mb-2 font-semibold">
          Showing the first {count(errors.length)} of {count(totalErrors)} problems.
        </p>
      ) : null}
      <Table
        caption={caption}
        head={
          <>
            <Th align="right">Line</Th>
            <Th>Column</Th>
            <Th>Problem</Th>
          </>
        }
      >
        {errors.map((error, i) => (
          <tr key={`${error.line}-${error.field}-${i}`}>
            <Td align="right">{error.line > 0 ? error.line : "—"}</Td>
            <Td className="font-mono text-sm">{error.line > 0 ? error.field : "whole file"}</Td>
            <Td>{error.message}</Td>
          </tr>
        ))}
      </Table>
    </>
  );
}

export default function CustomersImport({ loaderData, actionData }: Route.ComponentProps) {
  const fileId = useId();
  const navigation = useNavigation();
  const importing = navigation.state === "submitting" && navigation.formMethod?.toLowerCase() === "post";
  const formRef = useRef<HTMLFormElement>(null);
  const running = useRef<AbortController | null>(null);
  const [hydrated, setHydrated] = useState(false);
  const [state, setState] = useState<CheckState>({ status: "idle" });
  // The server's answer shows until another file is chosen.
  const [showServer, setShowServer] = useState(true);

  useEffect(() => setHydrated(true), []);
  useEffect(() => {
    if (!actionData) return;
    setShowServer(true);
    if (actionData.imported) {
      formRef.current?.reset();
      setState({ status: "idle" });
    }
  }, [actionData]);
  useEffect(() => () => running.current?.abort(), []);

  async function onFileChange(event: ChangeEvent<HTMLInputElement>) {
    running.current?.abort();
    setShowServer(false);
    const file = event.currentTarget.files?.[0];
    if (!file) {
      setState({ status: "idle" });
      return;
    }
    if (file.size > MAX_IMPORT_BYTES) {
      setState({ status: "refused", fileName: file.name, message: TOO_LARGE });
      return;
    }
    const controller = new AbortController();
    running.current = controller;
    setState({ status: "checking", fileName: file.name, progress: null });
    const text = await file.text();
    if (controller.signal.aborted) return;
    const check = await checkCustomerCsv(text, {
      pauseEvery: 200,
      signal: controller.signal,
      onProgress: (progress) => {
        if (!controller.signal.aborted) setState({ status: "checking", fileName: file.name, progress });
      },
    });
    if (!controller.signal.aborted) setState({ status: "checked", fileName: file.name, check });
  }

  const serverFileError = showServer ? actionData?.fileError : null;
  const fieldError = state.status === "refused" ? state.message : serverFileError ?? undefined;
  const clean = state.status === "checked" && state.check.totalErrors === 0;
  // Without JavaScript nothing is checked in the browser: the server checks on import.
  const canImport = !importing && (!hydrated || clean);
  const serverErrors = showServer && actionData?.errors ? actionData : null;
  const imported = showServer ? actionData?.imported : null;

  return (
    <>
      <Link to="/office/customers" className="mb-3 inline-flex min-h-11 items-center font-semibold text-pine-800 underline">
        ← Customers
      </Link>
      <PageHeader
        title="Import customers and yards"
        subtitle={`A CSV file with one row per yard, up to ${count(loaderData.maxRows)} rows and ${MB} MB. Every row is checked before anything is saved.`}
      />
      <div className="grid gap-6 lg:grid-cols-3">
        <div className="flex min-w-0 flex-col gap-6 lg:col-span-2">
          {imported ? (
            <FormMessage
              tone="info"
              message={`Imported ${plural(imported.customers, "customer")} (${count(imported.customersCreated)} new, ${count(imported.customers - imported.customersCreated)} updated) and ${plural(imported.yards, "yard")} (${count(imported.yardsCreated)} new) with ${plural(imported.colonies, "colony", "colonies")} from ${actionData?.fileName}.`}
            />
          ) : null}
          {serverErrors ? <FormMessage message={`Nothing was imported from ${serverErrors.fileName}: ${plural(serverErrors.totalErrors, "problem")} found. Correct the file and choose it again.`} /> : null}

          <Card title="Choose the file">
            <Form ref={formRef} method="post" encType="multipart/form-data" className="flex flex-col gap-4">
              <div className="flex flex-col gap-1">
                <label htmlFor={fileId} className="font-semibold">
                  CSV file
                </label>
                <p id={`${fileId}-hint`} className="text-sm text-ink-soft">
                  Saved from a spreadsheet as “CSV UTF-8”, with the header on the first line.
                </p>
                <input
                  id={fileId}
                  type="file"
                  name="file"
                  accept=".csv,text/csv"
                  required
                  onChange={onFileChange}
                  aria-invalid={fieldError ? true : undefined}
                  aria-describedby={`${fileId}-hint${fieldError ? ` ${fileId}-error` : ""}`}
                  className={`min-h-11 rounded-lg border-2 bg-card p-2 text-base file:mr-3 file:min-h-9 file:rounded-md file:border-0 file:bg-pine-700 file:px-3 file:font-semibold file:text-white ${fieldError ? "border-alarm-700" : "border-line"}`}
                />
                {fieldError ? (
                  <p id={`${fileId}-error`} className="text-sm font-semibold text-alarm-700">
                    {fieldError}
                  </p>
                ) : null}
              </div>

              {state.status === "checking" ? (
                <div className="flex flex-col gap-1">
                  <label htmlFor={`${fileId}-progress`} className="font-semibold">
                    Checking {state.fileName}
                    {state.progress ? `: line ${count(state.progress.linesRead)} of ${count(state.progress.totalLines)}` : "…"}
                  </label>
                  <progress
                    id={`${fileId}-progress`}
                    max={state.progress?.totalLines ?? 1}
                    value={state.progress?.linesRead ?? 0}
                    className="h-4 w-full accent-pine-700"
                  >
                    {state.progress ? `${Math.round((100 * state.progress.linesRead) / state.progress.totalLines)} %` : ""}
                  </progress>
                  {state.progress?.problems ? <p className="text-sm text-alarm-700">{plural(state.progress.problems, "problem")} so far</p> : null}
                </div>
              ) : null}

              {state.status === "checked" ? (
                <p role="status" className={`font-semibold ${clean ? "text-pine-800" : "text-alarm-700"}`}>
                  {clean
                    ? `${state.fileName}: ${plural(state.check.rows.length, "row")} checked, no problems. Ready to import ${plural(state.check.customers, "customer")} and ${plural(state.check.rows.length, "yard")}.`
                    : `${state.fileName}: ${plural(state.check.totalErrors, "problem")} found. Correct them in the spreadsheet, save it as CSV and choose it again; nothing is imported while a problem remains.`}
                </p>
              ) : null}

              <div className="flex flex-wrap items-center gap-3">
                <Button type="submit" disabled={!canImport}>
                  {importing ? "Importing…" : "Import"}
                </Button>
                {hydrated && !clean && !importing ? (
                  <span className="text-sm text-ink-soft">Import is available once the file has been checked without problems.</span>
                ) : null}
              </div>
            </Form>
          </Card>

          {state.status === "checked" && state.check.totalErrors > 0 ? (
            <Card title="Problems in the file">
              <ProblemsTable errors={state.check.errors} totalErrors={state.check.totalErrors} caption={`Problems in ${state.fileName}`} />
            </Card>
          ) : null}
          {serverErrors?.errors ? (
            <Card title="Problems the server found">
              <ProblemsTable errors={serverErrors.errors} totalErrors={serverErrors.totalErrors} caption={`Problems the server found in ${serverErrors.fileName}`} />
            </Card>
          ) : null}
        </div>

        <Card title="Columns" className="h-fit">
          <p className="mb-3 text-sm">
            One row per yard; repeat the customer's columns on each of their yards. A customer whose e-mail is already on file is updated, not
            added twice, and a yard with the same name as one of theirs is updated. Each yard gets colonies H1, H2, … up to its count, with the
            yard's box type and brood boxes.
          </p>
          <dl className="flex flex-col gap-2 text-sm">
            {CUSTOMER_CSV_COLUMNS.map((column) => (
              <div key={column}>
                <dt className="font-mono font-semibold">{column}</dt>
                <dd className="text-ink-soft">{CUSTOMER_CSV_HELP[column]}</dd>
              </div>
            ))}
          </dl>
          <a href="/api/customers.csv" download className={buttonClass("secondary", "mt-4 w-full")}>
            Download current customers
          </a>
        </Card>
      </div>
    </>
  );
}
