/**
 * The look of every message: Platen's paper ground, one sheet, ink text, the pine accent for the
 * one action, brick only for failures. Inline styles and tables, because mail programs ignore
 * style sheets; a plain-text part says the same thing in the same order.
 */

export interface Message {
  subject: string;
  text: string;
  html: string;
}

/** The e-mail palette: the app's, written out (mail clients see no stylesheet). */
export const COLOURS = {
  ground: "#f5f1e8",
  sheet: "#fbf9f4",
  rule: "#ddd5c4",
  ink: "#2b2823",
  soft: "#55504a",
  muted: "#68615a",
  accent: "#2f6b5e",
  brick: "#a3452f",
  brickSoft: "#f5e1da",
  ochreSoft: "#f3e8cc",
  ochre: "#805d11",
} as const;

const FONT = "-apple-system, 'Segoe UI', Roboto, Helvetica, Arial, sans-serif";

/** Escapes text for HTML element content and double- or single-quoted attributes. */
export function escapeHtml(value: string): string {
  return value.replace(/[&<>"']/g, (c) => ({ "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "'": "&#39;" })[c]!);
}

/** Only http(s) links go into a message; anything else is a programming error. */
export function safeHref(url: string): string {
  const parsed = new URL(url);
  if (parsed.protocol !== "http:" && parsed.protocol !== "https:") throw new Error(`Refusing a ${parsed.protocol} link in a message`);
  return url;
}

/** One block of a message body. Text is plain: every block escapes what it is given. */
export type Block =
  | { kind: "paragraph"; text: string }
  | { kind: "facts"; rows: [label: string, value: string][] }
  | { kind: "list"; title: string; items: string[]; tone?: "caution" | "failure" }
  | { kind: "button"; label: string; href: string }
  | { kind: "link"; label: string; href: string }
  | { kind: "small"; text: string };

export interface Layout {
  studio: string;
  subject: string;
  /** Shown by mail programs beside the subject. */
  preheader: string;
  heading: string;
  blocks: Block[];
  /** Why the person got this message and how to stop it. */
  footer: string;
}

function blockHtml(b: Block): string {
  const p = `margin:0 0 16px;font:15px/1.55 ${FONT};color:${COLOURS.soft};`;
  switch (b.kind) {
    case "paragraph":
      return `<p style="${p}">${escapeHtml(b.text)}</p>`;
    case "small":
      return `<p style="margin:0 0 12px;font:13px/1.5 ${FONT};color:${COLOURS.muted};">${escapeHtml(b.text)}</p>`;
    case "facts":
      return (
        `<table role="presentation" cellpadding="0" cellspacing="0" style="margin:0 0 18px;border-collapse:collapse;width:100%;">` +
        b.rows
          .map(
            ([label, value]) =>
              `<tr><td style="padding:6px 12px 6px 0;border-bottom:1px solid ${COLOURS.rule};font:13px/1.4 ${FONT};color:${COLOURS.muted};white-space:nowrap;vertical-align:top;">${escapeHtml(label)}</td>` +
              `<td style="padding:6px 0;border-bottom:1px solid ${COLOURS.rule};font:14px/1.4 ${FONT};color:${COLOURS.ink};font-weight:600;">${escapeHtml(value)}</td></tr>`,
          )
          .join("") +
        `</table>`
      );
    case "list": {
      const bg = b.tone === "failure" ? COLOURS.brickSoft : COLOURS.ochreSoft;
      const fg = b.tone === "failure" ? COLOURS.brick : COLOURS.ochre;
      return (
        `<div style="margin:0 0 18px;padding:12px 16px;background:${bg};border-radius:8px;">` +
        `<p style="margin:0 0 6px;font:600 13px/1.4 ${FONT};color:${fg};">${escapeHtml(b.title)}</p>` +
        `<ul style="margin:0;padding:0 0 0 18px;font:14px/1.5 ${FONT};color:${COLOURS.ink};">` +
        b.items.map((i) => `<li style="margin:2px 0;">${escapeHtml(i)}</li>`).join("") +
        `</ul></div>`
      );
    }
    case "button":
      return (
        `<table role="presentation" cellpadding="0" cellspacing="0" style="margin:8px 0 22px;"><tr>` +
        `<td style="border-radius:6px;background:${COLOURS.accent};">` +
        `<a href="${escapeHtml(safeHref(b.href))}" style="display:inline-block;padding:12px 22px;font:600 15px/1 ${FONT};color:#ffffff;text-decoration:none;border-radius:6px;">${escapeHtml(b.label)}</a>` +
        `</td></tr></table>`
      );
    case "link":
      return `<p style="margin:0 0 16px;font:13px/1.5 ${FONT};color:${COLOURS.muted};">${escapeHtml(b.label)}<br><a href="${escapeHtml(safeHref(b.href))}" style="color:${COLOURS.accent};word-break:break-all;">${escapeHtml(b.href)}</a></p>`;
  }
}

function blockText(b: Block): string {
  switch (b.kind) {
    case "paragraph":
    case "small":
      return b.text;
    case "facts":
      return b.rows.map(([l, v]) => `  ${l}: ${v}`).join("\n");
    case "list":
      return `${b.title}\n${b.items.map((i) => `  - ${i}`).join("\n")}`;
    case "button":
      return `${b.label}:\n${safeHref(b.href)}`;
    case "link":
      return `${b.label}\n${safeHref(b.href)}`;
  }
}

/**
 * A subject is one header line: a scan's file name (which may hold a line break or a tab, as Linux
 * allows) or anything else in it has each run of control characters shown as one space, so it
 * can never start a header of its own or fold oddly.
 */
export function subjectLine(s: string): string {
  // eslint-disable-next-line no-control-regex -- finding control characters is the point
  return s.replace(/[\u0000-\u001f\u007f-\u009f\u2028\u2029]+/g, " ").trim();
}

/** Renders a message's plain-text and HTML parts from the same blocks. */
export function renderLayout(l: Layout): Message {
  const body = l.blocks.map(blockHtml).join("\n");
  const html = `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1"><title>${escapeHtml(subjectLine(l.subject))}</title></head>
<body style="margin:0;padding:0;background:${COLOURS.ground};">
<span style="display:none;max-height:0;overflow:hidden;opacity:0;">${escapeHtml(l.preheader)}</span>
<table role="presentation" width="100%" cellpadding="0" cellspacing="0" style="background:${COLOURS.ground};border-collapse:collapse;"><tr><td align="center" style="padding:32px 16px;">
<table role="presentation" width="100%" cellpadding="0" cellspacing="0" style="max-width:560px;border-collapse:collapse;">
<tr><td style="padding:0 4px 14px;font:600 11px/1 ${FONT};letter-spacing:0.18em;text-transform:uppercase;color:${COLOURS.muted};">Platen &middot; <span style="letter-spacing:0.04em;text-transform:none;color:${COLOURS.soft};">${escapeHtml(l.studio)}</span></td></tr>
<tr><td style="background:${COLOURS.sheet};border:1px solid ${COLOURS.rule};border-radius:12px;padding:28px 28px 12px;">
<h1 style="margin:0 0 16px;font:600 21px/1.3 ${FONT};color:${COLOURS.ink};">${escapeHtml(l.heading)}</h1>
${body}
</td></tr>
<tr><td style="padding:14px 6px 0;font:12px/1.5 ${FONT};color:${COLOURS.muted};">${escapeHtml(l.footer)}</td></tr>
</table></td></tr></table>
</body></html>
`;
  const text = [`${l.studio} · Platen`, "", l.heading, "", ...l.blocks.map((b) => `${blockText(b)}\n`), "--", l.footer, ""].join("\n");
  return { subject: subjectLine(l.subject), text, html };
}
