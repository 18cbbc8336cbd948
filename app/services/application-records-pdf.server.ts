import { formatClock } from "~/components/format";
import { RECORD_KEEPING_NOTICE, gramsText, type ApplicationRecordLine } from "~/domain/application-records-csv";
import { LABEL_DEFERENCE_NOTICE } from "~/domain/safety";
import { PDF_COLOURS, startPdf } from "./pdf-document.server";

// The application records of a period as a PDF (pdfkit, Work Sans embedded as on the
// invoices): a title block with the business, the period, the filters, the product and its
// registration number; then a table with one row per finished visit — long text wraps inside
// its column, a row never splits over two pages, and the column headings repeat at the top of
// every page — then the totals and the note on keeping records. Landscape US Letter.

export type ApplicationRecordsPdfInput = {
  businessName: string;
  period: { from: string; to: string };
  /** What was filtered on, in words ("All crews", a crew's name …). */
  filterNames: { crew: string; customer: string };
  productName: string;
  productRegistrationNumber: string;
  timeZone: string;
  rows: readonly ApplicationRecordLine[];
  totals: { visits: number; colonies: number; grams: number };
  /** The day the report was made (YYYY-MM-DD, the business's today). */
  preparedOn: string;
};

const { ink: INK, inkSoft: INK_SOFT, line: LINE, pine: PINE, pine50: PINE_50 } = PDF_COLOURS;

const CELL_FONT_SIZE = 8;
const HEAD_FONT_SIZE = 8;
const PAD = 4;

type Column = { heading: string; width: number; align?: "left" | "right"; cell: (row: ApplicationRecordLine, timeZone: string) => string };

function timeSpan(row: ApplicationRecordLine, timeZone: string): string {
  const start = row.startedAt ? formatClock(row.startedAt, timeZone) : "?";
  const finish = row.finishedAt ? formatClock(row.finishedAt, timeZone) : "?";
  return `${start}–${finish}`;
}

function applicatorLines(row: ApplicationRecordLine): string {
  const people = row.applicators.length
    ? row.applicators.map((a) => `${a.name}\nLicence ${a.licence ?? "none on file"}`)
    : ["Applicator not recorded"];
  return [...people, row.crewName ? `Crew: ${row.crewName}` : null].filter(Boolean).join("\n");
}

// Widths add up to the 720 pt between the margins of landscape Letter.
const COLUMNS: Column[] = [
  { heading: "Date / time", width: 92, cell: (r, tz) => `${r.serviceDate}\n${timeSpan(r, tz)}` },
  {
    heading: "Customer",
    width: 118,
    cell: (r) => [r.customerName, r.customerAddress || null, r.customerAnonymised ? "(account deleted)" : null].filter(Boolean).join("\n"),
  },
  {
    heading: "Yard and location",
    width: 130,
    cell: (r) => [r.yardName, r.yardAddress, `${r.lat.toFixed(5)}, ${r.lng.toFixed(5)}`].filter(Boolean).join("\n"),
  },
  { heading: "Applicator and crew", width: 170, cell: (r) => applicatorLines(r) },
  { heading: "Colonies treated", width: 50, align: "right", cell: (r) => (r.coloniesSkipped ? `${r.coloniesTreated}\n${r.coloniesSkipped} skipped` : String(r.coloniesTreated)) },
  { heading: "Grams applied", width: 46, align: "right", cell: (r) => gramsText(r.gramsApplied) },
  {
    heading: "Weather",
    width: 114,
    cell: (r) => [r.weatherNote, r.airTempC === null || r.airTempC === undefined ? null : `Air ${r.airTempC} °C`].filter(Boolean).join("\n") || "—",
  },
];

/** Renders the records of a period as a PDF. */
export function renderApplicationRecordsPdf(input: ApplicationRecordsPdfInput): Promise<Buffer> {
  const title = `Application records ${input.period.from} to ${input.period.to}`;
  const { doc, bytes: done } = startPdf({
    size: "LETTER",
    layout: "landscape",
    margins: { top: 36, bottom: 48, left: 36, right: 36 },
    bufferPages: true,
    info: { Title: title, Author: input.businessName, Subject: `Oxalic acid vapor applications, ${input.period.from} to ${input.period.to}` },
  });

  const left = doc.page.margins.left;
  const right = doc.page.width - doc.page.margins.right;
  const width = right - left;
  const bottom = () => doc.page.height - doc.page.margins.bottom;
  const xs: number[] = [];
  COLUMNS.reduce((x, c) => (xs.push(x), x + c.width), left);

  // Title block.
  doc.font("bold").fontSize(18).fillColor(INK).text("Application records", left, doc.page.margins.top, { width });
  doc.font("semibold").fontSize(12).fillColor(PINE).text(input.businessName, { width });
  doc.moveDown(0.4);
  const facts: [string, string][] = [
    ["Period", `${input.period.from} to ${input.period.to}, both days included`],
    ["Filters", `Crew: ${input.filterNames.crew}. Customer: ${input.filterNames.customer}.`],
    ["Product", input.productName],
    ["Registration number", input.productRegistrationNumber],
    ["Times", `Clock times in ${input.timeZone}`],
    ["Prepared on", input.preparedOn],
  ];
  for (const [label, value] of facts) {
    const rowY = doc.y;
    doc.font("semibold").fontSize(9).fillColor(INK_SOFT).text(`${label}:`, left, rowY, { width: 110 });
    doc.font("regular").fontSize(9.5).fillColor(INK).text(value, left + 110, rowY, { width: width - 110 });
    doc.y = Math.max(doc.y, rowY + 12) + 1;
  }
  doc
    .font("regular")
    .fontSize(8.5)
    .fillColor(INK_SOFT)
    .text(
      "One row per finished visit. Colonies treated and grams applied are counted from the crew's per-colony tallies; the applicator is the crew member who recorded the treatments.",
      left,
      doc.y + 4,
      { width },
    );
  let y = doc.y + 10;

  const header = () => {
    doc.font("semibold").fontSize(HEAD_FONT_SIZE);
    const height = Math.max(...COLUMNS.map((c) => doc.heightOfString(c.heading, { width: c.width - 2 * PAD }))) + 2 * PAD;
    doc.rect(left, y, width, height).fill(PINE_50);
    doc.fillColor(INK_SOFT);
    COLUMNS.forEach((c, i) => doc.text(c.heading, xs[i] + PAD, y + PAD, { width: c.width - 2 * PAD, align: c.align ?? "left" }));
    y += height + 2;
  };

  const drawRow = (cells: string[], options: { bold?: boolean } = {}) => {
    doc.font(options.bold ? "bold" : "regular").fontSize(CELL_FONT_SIZE);
    const height = Math.max(...COLUMNS.map((c, i) => doc.heightOfString(cells[i] || " ", { width: c.width - 2 * PAD }))) + 2 * PAD;
    if (y + height > bottom()) {
      doc.addPage();
      y = doc.page.margins.top;
      header();
      doc.font(options.bold ? "bold" : "regular").fontSize(CELL_FONT_SIZE);
    }
    doc.fillColor(INK);
    COLUMNS.forEach((c, i) => doc.text(cells[i], xs[i] + PAD, y + PAD, { width: c.width - 2 * PAD, align: c.align ?? "left" }));
    y += height;
    doc.moveTo(left, y).lineTo(right, y).lineWidth(0.5).strokeColor(LINE).stroke();
  };

  header();
  if (input.rows.length === 0) {
    doc.font("regular").fontSize(10).fillColor(INK_SOFT).text("No finished visits in this period match these filters.", left + PAD, y + PAD, { width });
    y = doc.y + 8;
  }
  for (const row of input.rows) drawRow(COLUMNS.map((c) => c.cell(row, input.timeZone)));
  const { visits, colonies, grams } = input.totals;
  drawRow(["Totals", `${visits} ${visits === 1 ? "visit" : "visits"}`, "", "", String(colonies), gramsText(grams), ""], { bold: true });

  // The notes, kept together on one page.
  const notes: [string, string][] = [
    [RECORD_KEEPING_NOTICE.title, RECORD_KEEPING_NOTICE.text],
    ["The label and local rules come first", LABEL_DEFERENCE_NOTICE],
  ];
  doc.font("regular").fontSize(9);
  const notesHeight = notes.reduce((h, [, text]) => h + 16 + doc.heightOfString(text, { width }) + 8, 12);
  if (y + notesHeight > bottom()) {
    doc.addPage();
    y = doc.page.margins.top;
  } else {
    y += 14;
  }
  doc.y = y;
  for (const [heading, text] of notes) {
    doc.font("semibold").fontSize(10.5).fillColor(INK).text(heading, left, doc.y, { width });
    doc.font("regular").fontSize(9).fillColor(INK).text(text, left, doc.y + 2, { width });
    doc.moveDown(0.7);
  }

  // Footer on every page: which report and the page number.
  const range = doc.bufferedPageRange();
  for (let i = range.start; i < range.start + range.count; i++) {
    doc.switchToPage(i);
    const footerY = doc.page.height - doc.page.margins.bottom + 16;
    const keep = doc.page.margins.bottom;
    doc.page.margins.bottom = 0; // writing below the bottom margin must not add a page
    doc.font("regular").fontSize(8).fillColor(INK_SOFT);
    doc.text(`${input.businessName} · ${title}`, left, footerY, { width: width - 100, lineBreak: false });
    doc.text(`Page ${i - range.start + 1} of ${range.count}`, right - 100, footerY, { width: 100, align: "right", lineBreak: false });
    doc.page.margins.bottom = keep;
  }

  doc.end();
  return done;
}
