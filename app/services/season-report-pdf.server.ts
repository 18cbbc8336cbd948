import { formatServiceDate } from "~/components/format";
import { LABEL_DEFERENCE_NOTICE, SAFETY_CAUTIONS } from "~/domain/safety";
import type { SeasonReport } from "~/models/season-report.server";
import { PDF_COLOURS, startPdf } from "./pdf-document.server";

// The customer's season report as a PDF (pdfkit), the same content as /portal/season:
// per yard the rounds done, colonies treated and mite counts, what comes next, what the
// numbers mean, and the oxalic acid vapor cautions. Work Sans is embedded from the same
// files as the invoice (no network); long reports continue on further pages.

export type SeasonReportPdfOptions = { businessName: string; size?: "LETTER" | "A4" };

const { ink: INK, inkSoft: INK_SOFT, line: LINE, pine: PINE, pine50: PINE_50 } = PDF_COLOURS;
const OCHRE = "#8a520a";

function plural(count: number, one: string, many: string): string {
  return `${count} ${count === 1 ? one : many}`;
}

/** Renders the season report PDF. */
export function renderSeasonReportPdf(report: SeasonReport, options: SeasonReportPdfOptions): Promise<Buffer> {
  const { doc, bytes: done } = startPdf({
    size: options.size ?? "LETTER",
    info: { Title: `Season report ${report.year}`, Author: options.businessName, Subject: `Varroa treatment season ${report.year} for ${report.customerName}` },
  });

  const left = doc.page.margins.left;
  const right = doc.page.width - doc.page.margins.right;
  const width = right - left;
  const bottom = () => doc.page.height - doc.page.margins.bottom;
  const ensureRoom = (height: number) => {
    if (doc.y + height > bottom()) {
      doc.addPage();
      doc.y = doc.page.margins.top;
    }
  };

  // Header.
  doc.font("bold").fontSize(20).fillColor(PINE).text(options.businessName, left, 54, { width });
  doc.font("regular").fontSize(10).fillColor(INK_SOFT).text("Varroa treatment with oxalic acid vapor", { width });
  doc.moveDown(0.8);
  doc.font("bold").fontSize(18).fillColor(INK).text(`Season report ${report.year}`, { width });
  doc.font("regular").fontSize(11).fillColor(INK_SOFT).text(`For ${report.customerName}, as of ${formatServiceDate(report.today)}`, { width });
  doc.moveDown(0.4);
  doc.font("regular").fontSize(11).fillColor(INK).text(
    `${plural(report.totals.yards, "yard", "yards")}, ${plural(report.totals.roundsDone, "treatment round", "treatment rounds")} done, ${plural(report.totals.treatmentsGiven, "colony treatment", "colony treatments")} given.`,
    { width },
  );

  // What the numbers mean.
  doc.moveDown(0.8);
  doc.font("semibold").fontSize(12).fillColor(INK).text("What the numbers mean", { width });
  doc.font("regular").fontSize(9.5).fillColor(INK);
  for (const paragraph of report.explanation) doc.text(paragraph, { width, paragraphGap: 3 });
  doc.font("semibold").fontSize(9.5).text("Action thresholds your contractor uses:", { width });
  doc.font("regular");
  for (const line of report.thresholdLines) doc.text(`• ${line}`, left + 8, doc.y, { width: width - 8 });

  // One section per yard.
  const cols = [
    { title: "DATE", width: 92, align: "left" as const },
    { title: "ROUND", width: 42, align: "left" as const },
    { title: "TREATED", width: 50, align: "right" as const },
    { title: "SKIPPED", width: 50, align: "right" as const },
    { title: "MITES PER 100 BEES", width: 150, align: "left" as const },
    { title: "SINCE LAST COUNT", width: 0, align: "left" as const },
  ];
  cols[cols.length - 1].width = width - cols.slice(0, -1).reduce((s, c) => s + c.width, 0);
  const tableHeader = () => {
    const y = doc.y;
    doc.rect(left, y, width, 20).fill(PINE_50);
    doc.font("semibold").fontSize(8).fillColor(INK_SOFT);
    let x = left;
    for (const c of cols) {
      doc.text(c.title, x + 6, y + 6, { width: c.width - 12, align: c.align, lineBreak: false });
      x += c.width;
    }
    doc.y = y + 24;
  };

  for (const yard of report.yards) {
    doc.moveDown(1);
    ensureRoom(90);
    doc.x = left;
    doc.font("bold").fontSize(14).fillColor(PINE).text(yard.archived ? `${yard.name} (no longer in use)` : yard.name, left, doc.y, { width });
    doc.font("regular").fontSize(10).fillColor(INK_SOFT).text(
      `${plural(yard.colonies, "colony", "colonies")} · ${plural(yard.roundsDone, "round", "rounds")} done in ${report.year} · ${plural(yard.treatmentsGiven, "colony treatment", "colony treatments")}`,
      { width },
    );
    doc.moveDown(0.4);
    if (yard.rounds.length === 0) {
      doc.font("regular").fontSize(10).fillColor(INK).text(`No treatment rounds were done at this yard in ${report.year}.`, left, doc.y, { width });
    } else {
      tableHeader();
      for (const round of yard.rounds) {
        const cells = [
          formatServiceDate(round.serviceDate, false),
          `${round.roundNumber} of ${round.roundsPlanned}`,
          String(round.coloniesTreated),
          String(round.coloniesSkipped),
          round.text.mites,
          round.text.change,
        ];
        doc.font("regular").fontSize(9.5);
        const verdict = round.text.verdict;
        const height = Math.max(...cells.map((text, i) => doc.heightOfString(text, { width: cols[i].width - 12 })), 12) + (verdict ? 12 : 0);
        if (doc.y + height + 8 > bottom()) {
          doc.addPage();
          doc.y = doc.page.margins.top;
          tableHeader();
          doc.font("regular").fontSize(9.5);
        }
        const y = doc.y;
        let x = left;
        cells.forEach((text, i) => {
          doc.fillColor(INK).text(text, x + 6, y, { width: cols[i].width - 12, align: cols[i].align });
          x += cols[i].width;
        });
        if (verdict) {
          doc.font("regular").fontSize(8.5).fillColor(round.level === "above" ? OCHRE : INK_SOFT).text(`Average ${verdict}.`, left + 6, y + height - 11, { width: width - 12 });
        }
        doc.y = y + height + 4;
        doc.moveTo(left, doc.y).lineTo(right, doc.y).lineWidth(0.5).strokeColor(LINE).stroke();
        doc.y += 5;
      }
    }
    doc.font("regular").fontSize(10).fillColor(INK);
    ensureRoom(40);
    doc.text(yard.text.summary, left, doc.y + 2, { width });
    doc.font("semibold").text(yard.text.next, left, doc.y + 2, { width });
  }
  if (report.yards.length === 0) {
    doc.moveDown(1);
    doc.font("regular").fontSize(11).fillColor(INK).text("You have no yards in Varroute yet.", left, doc.y, { width });
  }

  // Safety.
  doc.moveDown(1.2);
  ensureRoom(160);
  doc.x = left;
  doc.font("bold").fontSize(12).fillColor(OCHRE).text("Safety with oxalic acid vapor", left, doc.y, { width });
  doc.font("regular").fontSize(9).fillColor(INK).text(
    "Keep people and pets away from the hives while the crew works, and take honey supers off before the visit. The crew works with these precautions:",
    { width },
  );
  for (const caution of SAFETY_CAUTIONS) {
    ensureRoom(30);
    doc.font("semibold").fontSize(9).text(`${caution.title}. `, left + 8, doc.y + 2, { width: width - 8, continued: true });
    doc.font("regular").text(caution.text);
  }
  ensureRoom(50);
  doc.font("regular").fontSize(8.5).fillColor(INK_SOFT).text(LABEL_DEFERENCE_NOTICE, left, doc.y + 6, { width });

  doc.end();
  return done;
}
