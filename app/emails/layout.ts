import { LABEL_DEFERENCE_NOTICE, SAFETY_CAUTIONS } from "~/domain/safety";

// The shared look of every e-mail Varroute sends: a plain, table-based HTML page with inline
// styles in Varroute's palette (app/app.css), no external images or fonts, and a plain-text
// twin built from the same blocks. Every interpolated value is HTML-escaped here, so
// templates pass raw strings. Every e-mail ends with the oxalic acid vapor cautions.

export type EmailContent = { subject: string; html: string; text: string };

/** One piece of an e-mail's body, rendered both as HTML and as plain text. */
export type EmailBlock =
  | { kind: "paragraph"; text: string; strong?: boolean }
  | { kind: "heading"; text: string }
  | { kind: "details"; rows: readonly (readonly [label: string, value: string])[] }
  | { kind: "list"; items: readonly string[] }
  | { kind: "note"; title: string; items: readonly string[] }
  | { kind: "button"; label: string; href: string };

/** Varroute's palette, as in app/app.css. */
export const EMAIL_COLORS = {
  ink: "#17201c",
  inkSoft: "#3d4a44",
  paper: "#f6f4ee",
  card: "#ffffff",
  line: "#d5d2c7",
  pine50: "#eaf3ef",
  pine700: "#175a43",
  pine900: "#0b3024",
  ochre100: "#fbeccf",
  ochre500: "#c7801a",
  ochre700: "#8a520a",
} as const;

const FONT = "-apple-system, 'Segoe UI', Helvetica, Arial, sans-serif";

/** The customer-facing introduction to the cautions (as in <SafetyCautions audience="customer" />). */
export const CUSTOMER_SAFETY_INTRO =
  "Keep people and pets away from the hives while the crew works, and take honey supers off before the visit. The crew works with these precautions:";

const HTML_ESCAPES: Record<string, string> = { "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "'": "&#39;" };

/** Escapes text for HTML element content and quoted attribute values. */
export function escapeHtml(value: unknown): string {
  return String(value ?? "").replace(/[&<>"']/g, (c) => HTML_ESCAPES[c]);
}

/** A link target that is safe to put in href: http(s) only, anything else becomes "#". */
export function safeHref(href: string): string {
  return /^https?:\/\//i.test(href.trim()) ? href.trim() : "#";
}

/** A subject line on one line (no header folding tricks through user data). */
export function oneLine(text: string): string {
  return text.replace(/[\r\n\t]+/g, " ").replace(/ {2,}/g, " ").trim();
}

function blockHtml(block: EmailBlock): string {
  const c = EMAIL_COLORS;
  switch (block.kind) {
    case "paragraph":
      return `<p style="margin:0 0 16px;font-size:16px;line-height:24px;color:${c.ink};${block.strong ? "font-weight:600;" : ""}">${escapeHtml(block.text)}</p>`;
    case "heading":
      return `<h2 style="margin:24px 0 8px;font-size:18px;line-height:24px;font-weight:700;color:${c.pine900};">${escapeHtml(block.text)}</h2>`;
    case "details":
      return (
        `<table role="presentation" width="100%" cellpadding="0" cellspacing="0" style="margin:0 0 16px;border-collapse:collapse;background:${c.pine50};border-radius:8px;">` +
        block.rows
          .map(
            ([label, value]) =>
              `<tr><th align="left" valign="top" style="padding:8px 12px;font-size:14px;line-height:20px;font-weight:600;color:${c.inkSoft};white-space:nowrap;">${escapeHtml(label)}</th>` +
              `<td style="padding:8px 12px;font-size:16px;line-height:22px;color:${c.ink};">${escapeHtml(value)}</td></tr>`,
          )
          .join("") +
        `</table>`
      );
    case "list":
      return (
        `<ul style="margin:0 0 16px;padding:0 0 0 22px;font-size:16px;line-height:24px;color:${c.ink};">` +
        block.items.map((item) => `<li style="margin:0 0 4px;">${escapeHtml(item)}</li>`).join("") +
        `</ul>`
      );
    case "note":
      return (
        `<div style="margin:0 0 16px;padding:12px 16px;background:${c.pine50};border-left:4px solid ${c.pine700};border-radius:4px;">` +
        `<p style="margin:0 0 6px;font-size:16px;line-height:22px;font-weight:700;color:${c.pine900};">${escapeHtml(block.title)}</p>` +
        `<ul style="margin:0;padding:0 0 0 20px;font-size:15px;line-height:22px;color:${c.ink};">` +
        block.items.map((item) => `<li style="margin:0 0 4px;">${escapeHtml(item)}</li>`).join("") +
        `</ul></div>`
      );
    case "button":
      return (
        `<p style="margin:8px 0 20px;"><a href="${escapeHtml(safeHref(block.href))}" ` +
        `style="display:inline-block;padding:12px 20px;background:${c.pine700};color:#ffffff;font-size:16px;font-weight:600;text-decoration:none;border-radius:8px;">` +
        `${escapeHtml(block.label)}</a></p>`
      );
  }
}

function blockText(block: EmailBlock): string {
  switch (block.kind) {
    case "paragraph":
      return block.text;
    case "heading":
      return `${block.text}\n${"-".repeat(Math.min(block.text.length, 60))}`;
    case "details":
      return block.rows.map(([label, value]) => `${label}: ${value}`).join("\n");
    case "list":
      return block.items.map((item) => `- ${item}`).join("\n");
    case "note":
      return [block.title, ...block.items.map((item) => `- ${item}`)].join("\n");
    case "button":
      return `${block.label}: ${block.href}`;
  }
}

function safetyHtml(intro: string): string {
  const c = EMAIL_COLORS;
  return (
    `<table role="presentation" width="100%" cellpadding="0" cellspacing="0" style="margin:24px 0 0;border-collapse:separate;background:${c.ochre100};border:2px solid ${c.ochre500};border-radius:10px;">` +
    `<tr><td style="padding:16px;font-family:${FONT};color:${c.ink};">` +
    `<h2 style="margin:0 0 8px;font-size:17px;line-height:22px;font-weight:700;color:${c.ink};">&#9888; Safety with oxalic acid vapor</h2>` +
    `<p style="margin:0 0 8px;font-size:15px;line-height:22px;font-weight:600;">${escapeHtml(intro)}</p>` +
    `<ul style="margin:0 0 12px;padding:0 0 0 20px;font-size:14px;line-height:21px;">` +
    SAFETY_CAUTIONS.map((caution) => `<li style="margin:0 0 6px;"><strong>${escapeHtml(caution.title)}.</strong> ${escapeHtml(caution.text)}</li>`).join("") +
    `</ul>` +
    `<p style="margin:0;padding:10px 0 0;border-top:1px solid ${c.ochre500};font-size:13px;line-height:19px;color:${c.ink};">${escapeHtml(LABEL_DEFERENCE_NOTICE)}</p>` +
    `</td></tr></table>`
  );
}

function safetyText(intro: string): string {
  return [
    "SAFETY WITH OXALIC ACID VAPOR",
    intro,
    ...SAFETY_CAUTIONS.map((caution) => `- ${caution.title}. ${caution.text}`),
    "",
    LABEL_DEFERENCE_NOTICE,
  ].join("\n");
}

export type EmailLayoutInput = {
  subject: string;
  /** The short line mail programs show after the subject. */
  preheader?: string;
  /** The main heading inside the e-mail. */
  title: string;
  blocks: readonly EmailBlock[];
  /** The introduction to the cautions; the customer wording unless given. */
  safetyIntro?: string;
  /** A line under the cautions, e.g. why the recipient gets this e-mail. */
  footer?: string;
};

/** Renders a whole e-mail (subject, HTML, plain text) in Varroute's layout, cautions included. */
export function renderEmail(input: EmailLayoutInput): EmailContent {
  const c = EMAIL_COLORS;
  const subject = oneLine(input.subject);
  const intro = input.safetyIntro ?? CUSTOMER_SAFETY_INTRO;
  const footer = input.footer ?? "This e-mail was sent by Varroute for your Varroa treatment contractor.";
  const preheader = input.preheader
    ? `<div style="display:none;max-height:0;overflow:hidden;mso-hide:all;font-size:1px;line-height:1px;color:${c.paper};">${escapeHtml(input.preheader)}</div>`
    : "";

  const html =
    `<!DOCTYPE html>\n<html lang="en"><head><meta charset="utf-8">` +
    `<meta name="viewport" content="width=device-width, initial-scale=1">` +
    `<meta name="color-scheme" content="light"><title>${escapeHtml(subject)}</title></head>` +
    `<body style="margin:0;padding:0;background:${c.paper};font-family:${FONT};color:${c.ink};">` +
    preheader +
    `<table role="presentation" width="100%" cellpadding="0" cellspacing="0" style="background:${c.paper};border-collapse:collapse;">` +
    `<tr><td align="center" style="padding:24px 12px;">` +
    `<table role="presentation" width="100%" cellpadding="0" cellspacing="0" style="max-width:600px;border-collapse:collapse;">` +
    `<tr><td style="padding:0 4px 12px;font-family:${FONT};font-size:22px;line-height:28px;font-weight:700;color:${c.pine700};letter-spacing:0.5px;">Varroute</td></tr>` +
    `<tr><td style="padding:24px;background:${c.card};border:1px solid ${c.line};border-radius:12px;font-family:${FONT};">` +
    `<h1 style="margin:0 0 16px;font-size:22px;line-height:28px;font-weight:700;color:${c.ink};">${escapeHtml(input.title)}</h1>` +
    input.blocks.map(blockHtml).join("") +
    safetyHtml(intro) +
    `</td></tr>` +
    `<tr><td style="padding:12px 4px;font-family:${FONT};font-size:13px;line-height:19px;color:${c.inkSoft};">${escapeHtml(footer)}</td></tr>` +
    `</table></td></tr></table></body></html>\n`;

  const text =
    ["VARROUTE", "", input.title, "=".repeat(Math.min(input.title.length, 60)), "", input.blocks.map(blockText).join("\n\n"), "", safetyText(intro), "", "--", footer].join(
      "\n",
    ) + "\n";

  return { subject, html, text };
}
