import Papa from "papaparse";
import { z } from "zod";
import { BOX_TYPE_LABELS, BOX_TYPES, MAX_BROOD_BOXES, MIN_BROOD_BOXES, type BoxType } from "~/domain/box-types";

// Customers and their yards as a CSV file: one row per yard, the customer's columns
// repeated on each of their rows. The row schema and the whole-file check below run in
// the browser (to show every problem before uploading) and again on the server (which
// refuses to write anything while a single problem remains).

export const CUSTOMER_CSV_COLUMNS = [
  "customer_name",
  "email",
  "phone",
  "address_line",
  "city",
  "region",
  "postal_code",
  "yard_name",
  "lat",
  "lng",
  "colonies",
  "box_type",
  "brood_boxes_per_colony",
  "brood_status",
  "supers_off",
  "access_notes",
] as const;
export type CustomerCsvColumn = (typeof CUSTOMER_CSV_COLUMNS)[number];

/** Columns a file may leave out of its header: files made before box_type existed still import. */
export const OPTIONAL_CSV_COLUMNS: readonly CustomerCsvColumn[] = ["box_type"];
const REQUIRED_CSV_COLUMNS = CUSTOMER_CSV_COLUMNS.filter((c) => !OPTIONAL_CSV_COLUMNS.includes(c));

/** The customer's own columns: every row of one e-mail must carry the same values. */
export const CUSTOMER_COLUMNS = ["customer_name", "phone", "address_line", "city", "region", "postal_code"] as const;

export const MAX_IMPORT_BYTES = 5 * 1024 * 1024;
export const MAX_IMPORT_ROWS = 5000;
/** Problems listed in full; beyond this only the count is reported. */
export const MAX_LISTED_ERRORS = 1000;

function listed(words: string[]): string {
  return words.length < 2 ? words.join("") : `${words.slice(0, -1).join(", ")} or ${words.at(-1)}`;
}

/** What each column holds, for the help table on the import page. */
export const CUSTOMER_CSV_HELP: Record<CustomerCsvColumn, string> = {
  customer_name: "Customer's name (required)",
  email: "Customer's e-mail (required); rows with the same e-mail are one customer",
  phone: "Digits, spaces and + ( ) - . (may be blank)",
  address_line: "Street and number (may be blank)",
  city: "Town (may be blank)",
  region: "State or region (may be blank)",
  postal_code: "ZIP or postal code (may be blank)",
  yard_name: "Name of the yard (required), unique per customer",
  lat: "Latitude in decimal degrees, −90 to 90",
  lng: "Longitude in decimal degrees, −180 to 180",
  colonies: "Number of colonies, a whole number 0 to 200",
  box_type: `Brood box type, which sets the dose: ${listed(BOX_TYPES.map((t) => BOX_TYPE_LABELS[t].toLowerCase()))}; blank = deep. A file without this column leaves each yard's box type as it is (new yards are deep)`,
  brood_boxes_per_colony: `Brood boxes per colony, ${MIN_BROOD_BOXES} to ${MAX_BROOD_BOXES} (a living colony has at least one)`,
  brood_status: "brood, broodless or unknown (blank = unknown)",
  supers_off: "yes or no (true / false also work; blank = no)",
  access_notes: "Gate codes, parking, dogs … (may be blank)",
};

// A spreadsheet treats a cell starting with = + - @ as a formula; the export writes such
// text with a leading apostrophe, and the import takes that apostrophe off again.
const FORMULA_START = /^'(?=[=+\-@\t\r])/;

/** A CSV cell as trimmed text ("" when the cell is missing). */
function cell<T extends z.ZodType>(schema: T) {
  return z.preprocess((v) => (typeof v === "string" ? v.replace(FORMULA_START, "").trim() : v === undefined || v === null ? "" : v), schema);
}

function optionalText(max: number, message: string) {
  return cell(z.string().max(max, message)).transform((v) => (v === "" ? null : v));
}

const DECIMAL = /^[+-]?(\d+(\.\d*)?|\.\d+)$/;
const WHOLE = /^\+?\d+$/;

function decimal(label: string, example: string, min: number, max: number) {
  const range = `${label[0].toUpperCase()}${label.slice(1)} must be between ${min < 0 ? `−${-min}` : min} and ${max}.`;
  return cell(
    z
      .string()
      .min(1, `Enter the ${label}.`)
      .regex(DECIMAL, `Enter the ${label} as a decimal number, e.g. ${example}.`)
      .transform(Number)
      .pipe(z.number().min(min, range).max(max, range)),
  );
}

function wholeNumber(label: string, max: number, tooMany: string, least?: { min: number; message: string }) {
  const min = least?.min ?? 0;
  return cell(
    z
      .string()
      .min(1, `Enter the ${label}.`)
      .regex(WHOLE, `Enter the ${label} as a whole number, ${min} or more.`)
      .transform(Number)
      .pipe(z.number().min(min, least?.message ?? `Enter the ${label} as ${min} or more.`).max(max, tooMany)),
  );
}

// The box type as written in the cell: its name (deep, medium, nuc) or the label the app
// shows ("Nuc (small single box)"), in any case and spacing.
const BOX_TYPE_BY_WORD = new Map<string, BoxType>(BOX_TYPES.flatMap((t) => [[t, t], [BOX_TYPE_LABELS[t].toLowerCase(), t]] as const));
const BOX_TYPE_MESSAGE = `Enter the box type as ${listed([...BOX_TYPES])} (blank = deep).`;

const boxTypeCell = cell(
  z.string().transform((v, ctx): BoxType => {
    const word = v.toLowerCase().replace(/\s+/g, " ");
    if (word === "") return "deep";
    const boxType = BOX_TYPE_BY_WORD.get(word);
    if (boxType) return boxType;
    ctx.addIssue({ code: "custom", message: BOX_TYPE_MESSAGE });
    return z.NEVER;
  }),
);

const YES = ["yes", "true"];
const NO = ["no", "false", ""];

/** One row of the customers-and-yards CSV, keyed by column name, values as text. */
export const customerImportRowSchema = z.object({
  customer_name: cell(z.string().min(1, "Enter the customer's name.").max(120, "Keep the customer's name to 120 characters or fewer.")),
  email: cell(
    z
      .string()
      .toLowerCase()
      .min(1, "Enter the customer's e-mail address.")
      .max(254, "Keep the e-mail address to 254 characters or fewer.")
      .pipe(z.email("Enter a valid e-mail address, e.g. name@example.com.")),
  ),
  phone: cell(
    z
      .string()
      .max(40, "Keep the phone number to 40 characters or fewer.")
      .regex(/^[0-9+()\-. ]*$/, "Use digits, spaces and + ( ) - . only in the phone number."),
  ).transform((v) => (v === "" ? null : v)),
  address_line: optionalText(200, "Keep the address line to 200 characters or fewer."),
  city: optionalText(100, "Keep the town to 100 characters or fewer."),
  region: optionalText(100, "Keep the region to 100 characters or fewer."),
  postal_code: optionalText(20, "Keep the postal code to 20 characters or fewer."),
  yard_name: cell(z.string().min(1, "Enter the yard's name, e.g. “Home yard”.").max(80, "Keep the yard's name to 80 characters or fewer.")),
  lat: decimal("latitude", "42.4440", -90, 90),
  lng: decimal("longitude", "-76.5019", -180, 180),
  colonies: wholeNumber("number of colonies", 200, "Enter at most 200 colonies in one yard; split a larger apiary into several yards."),
  // null: the file has no box_type column (made before it existed), so the import leaves an
  // existing yard's box type alone rather than turning its medium or nuc boxes into deeps.
  box_type: z.preprocess((v) => (v === undefined ? null : v), boxTypeCell.nullable()),
  brood_boxes_per_colony: wholeNumber("brood boxes per colony", MAX_BROOD_BOXES, `Enter at most ${MAX_BROOD_BOXES} brood boxes per colony.`, {
    min: MIN_BROOD_BOXES,
    message: `A living colony has at least one brood box: enter ${MIN_BROOD_BOXES} to ${MAX_BROOD_BOXES} brood boxes per colony.`,
  }),
  brood_status: cell(
    z
      .string()
      .toLowerCase()
      .transform((v) => (v === "" ? "unknown" : v))
      .pipe(z.enum(["brood", "broodless", "unknown"], { error: "Enter brood, broodless or unknown." })),
  ),
  supers_off: cell(
    z
      .string()
      .toLowerCase()
      .refine((v) => YES.includes(v) || NO.includes(v), "Enter yes or no (true or false also work).")
      .transform((v) => YES.includes(v)),
  ),
  access_notes: cell(z.string().max(2000, "Keep the access notes to 2,000 characters or fewer.")),
});

export type CustomerImportRow = z.output<typeof customerImportRowSchema>;
export type CheckedImportRow = CustomerImportRow & { line: number };

/** A problem in the file: `line` is the line number in the file (the header is line 1; 0 means the whole file). */
export type ImportRowError = { line: number; field: string; message: string };

export type CustomerCsvCheck = {
  rows: CheckedImportRow[];
  /** At most MAX_LISTED_ERRORS problems, in file order. */
  errors: ImportRowError[];
  totalErrors: number;
  customers: number;
};

export type CustomerCsvProgress = { linesRead: number; totalLines: number; rowsChecked: number; problems: number };

const LINE_BREAK = /\r\n|\r|\n/g;

function lineBreaks(text: string): number {
  return text.match(LINE_BREAK)?.length ?? 0;
}

function plural(n: number, one: string, many = `${one}s`) {
  return `${n.toLocaleString("en-US")} ${n === 1 ? one : many}`;
}

/** The file's problems and its valid rows, row by row, so it can run while the file streams. */
class CustomerCsvChecker {
  rows: CheckedImportRow[] = [];
  errors: ImportRowError[] = [];
  totalErrors = 0;
  private columns: string[] | null = null;
  private byEmail = new Map<string, CheckedImportRow>();
  private yardLines = new Map<string, number>();
  rowsChecked = 0;
  stopped = false;

  private report(line: number, field: string, message: string) {
    this.totalErrors++;
    if (this.errors.length < MAX_LISTED_ERRORS) this.errors.push({ line, field, message });
  }

  /** Papa's own complaint about a row (an unclosed quote, mostly). */
  parseProblem(line: number, code: string, message: string) {
    if (code === "UndetectableDelimiter") return;
    const text = code === "MissingQuotes" ? "A quoted value is not closed: a closing \" is missing." : message;
    this.report(line, "row", text);
  }

  /** A problem with the whole file from `line` on; checking stops there. */
  fileProblem(line: number, message: string) {
    this.report(line, "file", message);
    this.stopped = true;
  }

  /** Takes one parsed record that starts at `line`. */
  record(values: string[], line: number) {
    if (this.stopped) return;
    if (this.columns === null) return this.header(values, line);
    if (values.every((v) => v.trim() === "")) return; // a blank line
    this.rowsChecked++;
    if (this.rowsChecked > MAX_IMPORT_ROWS) {
      this.report(line, "file", `The file has more than ${plural(MAX_IMPORT_ROWS, "row")}; split it into smaller files and import them one by one.`);
      this.stopped = true;
      return;
    }
    if (values.length !== this.columns.length) {
      this.report(line, "row", `This row has ${plural(values.length, "value")}; the header has ${plural(this.columns.length, "column")}. Check for a missing or extra comma.`);
      return;
    }
    const input: Record<string, string> = {};
    this.columns.forEach((column, i) => (input[column] = values[i]));
    const parsed = customerImportRowSchema.safeParse(input);
    if (!parsed.success) {
      const seen = new Set<string>();
      for (const issue of parsed.error.issues) {
        const field = String(issue.path[0] ?? "row");
        if (seen.has(field)) continue;
        seen.add(field);
        this.report(line, field, issue.message);
      }
      return;
    }
    this.crossCheck({ ...parsed.data, line });
  }

  private header(values: string[], line: number) {
    const names = values.map((v, i) => (i === 0 ? v.replace(/^\uFEFF/, "") : v).trim().toLowerCase());
    if (names.every((n) => n === "")) {
      this.report(line, "header", `The first line must be the header: ${CUSTOMER_CSV_COLUMNS.join(",")}.`);
      this.stopped = true;
      return;
    }
    let ok = true;
    const seen = new Set<string>();
    for (const name of names) {
      if (!(CUSTOMER_CSV_COLUMNS as readonly string[]).includes(name)) {
        this.report(line, "header", name ? `Unknown column “${name}”. The columns are: ${CUSTOMER_CSV_COLUMNS.join(", ")}.` : "A column in the header has no name.");
        ok = false;
      } else if (seen.has(name)) {
        this.report(line, "header", `The column “${name}” appears twice in the header.`);
        ok = false;
      }
      seen.add(name);
    }
    for (const column of REQUIRED_CSV_COLUMNS) {
      if (!seen.has(column)) {
        this.report(line, "header", `The header lacks the column “${column}”. The first line must name every column but ${listed([...OPTIONAL_CSV_COLUMNS])} (values may be blank where allowed).`);
        ok = false;
      }
    }
    this.columns = names;
    if (!ok) this.stopped = true;
  }

  /** Rules across rows: one customer per e-mail, one yard name per customer. */
  private crossCheck(row: CheckedImportRow) {
    let fine = true;
    const first = this.byEmail.get(row.email);
    if (first) {
      for (const column of CUSTOMER_COLUMNS) {
        if ((first[column] ?? "") !== (row[column] ?? "")) {
          this.report(row.line, column, `Differs from line ${first.line}, which has the same e-mail; every row of one customer must carry the same customer columns.`);
          fine = false;
        }
      }
    } else this.byEmail.set(row.email, row);
    const yardKey = `${row.email}\n${row.yard_name.toLowerCase()}`;
    const yardLine = this.yardLines.get(yardKey);
    if (yardLine !== undefined) {
      this.report(row.line, "yard_name", `This customer already has a yard with this name on line ${yardLine}; give each yard its own name.`);
      fine = false;
    } else this.yardLines.set(yardKey, row.line);
    if (fine) this.rows.push(row);
  }

  finish(endLine: number): CustomerCsvCheck {
    if (!this.stopped && this.columns === null) this.report(1, "header", `The file is empty. The first line must be the header: ${CUSTOMER_CSV_COLUMNS.join(",")}.`);
    else if (!this.stopped && this.rowsChecked === 0) this.report(Math.max(2, endLine), "file", "The file has no rows under the header.");
    return { rows: this.rows, errors: this.errors, totalErrors: this.totalErrors, customers: this.byEmail.size };
  }
}

/**
 * Checks a customers-and-yards CSV against the row schema and the rules across rows.
 * Papa Parse reads it row by row (no worker); with `pauseEvery` it pauses after that
 * many rows so the browser can draw the progress bar, and `onProgress` hears how far it is.
 */
export function checkCustomerCsv(
  csvText: string,
  options: { onProgress?: (progress: CustomerCsvProgress) => void; pauseEvery?: number; signal?: AbortSignal } = {},
): Promise<CustomerCsvCheck> {
  const text = csvText.replace(/^\uFEFF/, "");
  const totalLines = lineBreaks(text.replace(/(\r\n|\r|\n)$/, "")) + 1;
  const checker = new CustomerCsvChecker();
  let line = 1;
  let recordsSinceYield = 0;
  const progress = () => ({ linesRead: Math.min(line - 1, totalLines), totalLines, rowsChecked: checker.rowsChecked, problems: checker.totalErrors });
  return new Promise((resolve) => {
    if (text.trim() === "") {
      resolve(checker.finish(1));
      return;
    }
    const badByte = text.indexOf("\uFFFD");
    if (badByte >= 0) {
      // Text decoded as UTF-8 that was not: a spreadsheet saved it in an older encoding.
      checker.fileProblem(lineBreaks(text.slice(0, badByte)) + 1, "This line has characters that are not UTF-8 text. Save the file as “CSV UTF-8” and choose it again.");
      resolve(checker.finish(1));
      return;
    }
    Papa.parse<string[]>(text, {
      worker: false,
      header: false,
      skipEmptyLines: false,
      delimitersToGuess: [",", ";", "\t"],
      step(result, parser) {
        const values = result.data;
        const start = line;
        line += 1 + values.reduce((sum, v) => sum + lineBreaks(v), 0);
        for (const error of result.errors) checker.parseProblem(start, error.code, error.message);
        checker.record(values, start);
        if (checker.stopped || options.signal?.aborted) {
          parser.abort();
          return;
        }
        if (options.pauseEvery && ++recordsSinceYield >= options.pauseEvery) {
          recordsSinceYield = 0;
          options.onProgress?.(progress());
          parser.pause();
          setTimeout(() => parser.resume(), 0);
        }
      },
      complete() {
        options.onProgress?.({ ...progress(), linesRead: totalLines });
        resolve(checker.finish(line - 1));
      },
    });
  });
}

/** Text for one yard row of the CSV: the customer's contact, then the yard. */
export type CustomerCsvRecord = Record<CustomerCsvColumn, string | number>;

/** CSV text for rows in the column order above; text that a spreadsheet would read as a
 *  formula gets a leading apostrophe (the import removes it). */
export function customerCsvText(records: CustomerCsvRecord[]): string {
  return Papa.unparse(
    { fields: [...CUSTOMER_CSV_COLUMNS], data: records.map((r) => CUSTOMER_CSV_COLUMNS.map((c) => r[c])) },
    { escapeFormulae: /^[=+\-@\t\r]/, newline: "\r\n" },
  );
}
