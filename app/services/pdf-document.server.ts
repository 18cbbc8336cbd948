import { readFileSync } from "node:fs";
import { createRequire } from "node:module";
import PDFDocument from "pdfkit";

// What every Varroute PDF shares (invoice, receipt, season report, application records):
// Work Sans embedded from @fontsource/work-sans (the WOFF files in node_modules: no network)
// under the names "regular", "semibold" and "bold", the palette of app/app.css, and the
// document collected into one Buffer when it ends.

const require = createRequire(import.meta.url);
const FONT_FILES = {
  regular: "@fontsource/work-sans/files/work-sans-latin-400-normal.woff",
  semibold: "@fontsource/work-sans/files/work-sans-latin-600-normal.woff",
  bold: "@fontsource/work-sans/files/work-sans-latin-700-normal.woff",
} as const;
type FontName = keyof typeof FONT_FILES;

let fontCache: Record<FontName, Buffer> | undefined;
function workSansFonts(): Record<FontName, Buffer> {
  fontCache ??= {
    regular: readFileSync(require.resolve(FONT_FILES.regular)),
    semibold: readFileSync(require.resolve(FONT_FILES.semibold)),
    bold: readFileSync(require.resolve(FONT_FILES.bold)),
  };
  return fontCache;
}

/** Varroute's palette (app/app.css), as in the e-mails. */
export const PDF_COLOURS = { ink: "#17201c", inkSoft: "#3d4a44", line: "#d5d2c7", pine: "#175a43", pine50: "#eaf3ef" } as const;

/**
 * A new PDF with the Work Sans fonts registered, and a promise of its bytes once
 * `doc.end()` is called. Letter with 54 pt margins unless the options say otherwise.
 */
export function startPdf(options: PDFKit.PDFDocumentOptions): { doc: PDFKit.PDFDocument; bytes: Promise<Buffer> } {
  const doc = new PDFDocument({ size: "LETTER", margins: { top: 54, bottom: 54, left: 54, right: 54 }, ...options });
  const chunks: Buffer[] = [];
  const bytes = new Promise<Buffer>((resolve, reject) => {
    doc.on("data", (chunk: Buffer) => chunks.push(chunk));
    doc.on("end", () => resolve(Buffer.concat(chunks)));
    doc.on("error", reject);
  });
  const fonts = workSansFonts();
  for (const name of Object.keys(fonts) as FontName[]) doc.registerFont(name, fonts[name]);
  return { doc, bytes };
}
