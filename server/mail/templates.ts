import { ROLE_DESCRIPTIONS, ROLE_LABELS, type Role } from "../../shared/roles";
import { renderLayout, type Block, type Message } from "./layout";

/**
 * Every message Platen sends, as pure functions of what it is about: no database, no clock, no
 * transport. Each gives a subject, a plain-text part and an HTML part; all text given to them is
 * escaped in the HTML part, so a name or a file name can never add markup.
 */

export type { Message };

/** True whether the person turned the notice on or it came on with their role: it says neither. */
const NOTICE_FOOTER = (studio: string) =>
  `You get this because this notice is on for your account in Platen for ${studio}. Turn it off under Your account → Notices.`;

/** "3 July 2026, 14:05 UTC": unambiguous in any country. */
export function formatWhen(d: Date): string {
  const months = ["January", "February", "March", "April", "May", "June", "July", "August", "September", "October", "November", "December"];
  const hh = String(d.getUTCHours()).padStart(2, "0");
  const mm = String(d.getUTCMinutes()).padStart(2, "0");
  return `${d.getUTCDate()} ${months[d.getUTCMonth()]} ${d.getUTCFullYear()}, ${hh}:${mm} UTC`;
}

/** "7 days", "1 hour", "90 minutes". */
export function formatDuration(ms: number): string {
  const minutes = Math.round(ms / 60_000);
  if (minutes % 1440 === 0) return plural(minutes / 1440, "day");
  if (minutes % 60 === 0) return plural(minutes / 60, "hour");
  return plural(minutes, "minute");
}

const plural = (n: number, word: string) => `${n} ${word}${n === 1 ? "" : "s"}`;

export interface InvitationInput {
  studio: string;
  email: string;
  role: Role;
  /** Who sent it, as their name reads in Platen; null when they are gone. */
  inviter: string | null;
  link: string;
  expiresAt: Date;
  validForMs: number;
}

export function invitationMessage(i: InvitationInput): Message {
  const who = i.inviter ?? "An admin";
  const role = ROLE_LABELS[i.role].toLowerCase();
  return renderLayout({
    studio: i.studio,
    subject: `You are invited to ${i.studio} on Platen`,
    preheader: `${who} invited you as ${role}. The link works once, for ${formatDuration(i.validForMs)}.`,
    heading: `Join ${i.studio}`,
    blocks: [
      {
        kind: "paragraph",
        text: `${who} invited you (${i.email}) to the studio's Platen, where its scans become a library of finished pieces.`,
      },
      {
        kind: "facts",
        rows: [
          ["Your role", `${ROLE_LABELS[i.role]}: ${ROLE_DESCRIPTIONS[i.role]}`],
          ["Link valid until", formatWhen(i.expiresAt)],
        ],
      },
      { kind: "paragraph", text: "Open the link, enter your name and choose a password. You are then signed in." },
      { kind: "button", label: "Accept the invitation", href: i.link },
      { kind: "link", label: "If the button does not work, copy this address into your browser:", href: i.link },
      {
        kind: "small",
        text: `The link works once and only until ${formatWhen(i.expiresAt)}. If it has run out, ask ${who === "An admin" ? "an admin" : who} to send a new one.`,
      },
    ],
    footer: `You get this because someone at ${i.studio} entered your address. If you did not expect it, ignore it: nothing happens until the link is used.`,
  });
}

export interface ResetInput {
  studio: string;
  name: string;
  link: string;
  expiresAt: Date;
  validForMs: number;
}

export function passwordResetMessage(r: ResetInput): Message {
  return renderLayout({
    studio: r.studio,
    subject: `Choose a new password for ${r.studio} on Platen`,
    preheader: `The link works once, for ${formatDuration(r.validForMs)}.`,
    heading: "Choose a new password",
    blocks: [
      {
        kind: "paragraph",
        text: `Hello ${r.name}, someone asked for a new password for your account. If it was you, open the link and choose one.`,
      },
      { kind: "button", label: "Choose a new password", href: r.link },
      { kind: "link", label: "If the button does not work, copy this address into your browser:", href: r.link },
      {
        kind: "small",
        text: `The link works once and only until ${formatWhen(r.expiresAt)}. Choosing a new password signs you out everywhere else.`,
      },
    ],
    footer: "If you did not ask for this, ignore this message: your password stays as it is.",
  });
}

export interface BatchFinishedInput {
  studio: string;
  name: string;
  link: string;
  finishedAt: Date;
  counts: { total: number; done: number; failed: number; cancelled: number };
  /** Notes from the outputs, such as a print below 300 DPI, with what they are about. */
  warnings: string[];
  failures: { what: string; error: string }[];
}

const MAX_LISTED = 10;
const listed = (items: string[]) =>
  items.length > MAX_LISTED ? [...items.slice(0, MAX_LISTED), `… and ${items.length - MAX_LISTED} more (see the batch)`] : items;

export function batchFinishedMessage(b: BatchFinishedInput): Message {
  const { counts } = b;
  const outcome =
    counts.failed > 0
      ? `${counts.done} of ${counts.total} made, ${counts.failed} failed`
      : counts.done === counts.total
        ? `all ${plural(counts.total, "item")} made`
        : `${counts.done} of ${counts.total} made`;
  const blocks: Block[] = [
    { kind: "paragraph", text: `The batch “${b.name}” finished on ${formatWhen(b.finishedAt)}: ${outcome}.` },
    {
      kind: "facts",
      rows: [
        ["Made", String(counts.done)],
        ["Failed", String(counts.failed)],
        ...(counts.cancelled ? ([["Cancelled", String(counts.cancelled)]] as [string, string][]) : []),
        ["Warnings", String(b.warnings.length)],
        ["Items in all", String(counts.total)],
      ],
    },
  ];
  if (b.failures.length)
    blocks.push({ kind: "list", tone: "failure", title: "Failures", items: listed(b.failures.map((f) => `${f.what}: ${f.error}`)) });
  if (b.warnings.length) blocks.push({ kind: "list", tone: "caution", title: "Warnings", items: listed(b.warnings) });
  blocks.push({ kind: "button", label: counts.failed ? "Open the batch to retry the failures" : "Open the batch", href: b.link });
  return renderLayout({
    studio: b.studio,
    subject: counts.failed ? `Batch finished with ${plural(counts.failed, "failure")}: ${b.name}` : `Batch finished: ${b.name}`,
    preheader: outcome,
    heading: "A batch is finished",
    blocks,
    footer: NOTICE_FOOTER(b.studio),
  });
}

export interface IntakeFinishedInput {
  studio: string;
  name: string;
  link: string;
  counts: { scans: number; ready: number; failed: number; duplicates: number; pieces: number };
  /** Scans whose resolution was assumed, and other notes a person should check. */
  warnings: string[];
  failures: { what: string; error: string }[];
}

export function intakeFinishedMessage(i: IntakeFinishedInput): Message {
  const c = i.counts;
  const outcome = `${plural(c.scans, "scan")}: ${c.ready} ready for review, ${c.failed} failed${c.duplicates ? `, ${plural(c.duplicates, "duplicate")}` : ""}`;
  const blocks: Block[] = [
    {
      kind: "paragraph",
      text: `Every scan of the intake “${i.name}” has been read and split, or has failed. ${plural(c.pieces, "piece")} found, waiting for review.`,
    },
    {
      kind: "facts",
      rows: [
        ["Scans", String(c.scans)],
        ["Ready for review", String(c.ready)],
        ["Pieces found", String(c.pieces)],
        ["Failed", String(c.failed)],
        ...(c.duplicates ? ([["Duplicates (not analysed again)", String(c.duplicates)]] as [string, string][]) : []),
        ["Warnings", String(i.warnings.length)],
      ],
    },
  ];
  if (i.failures.length)
    blocks.push({ kind: "list", tone: "failure", title: "Failures", items: listed(i.failures.map((f) => `${f.what}: ${f.error}`)) });
  if (i.warnings.length) blocks.push({ kind: "list", tone: "caution", title: "Warnings", items: listed(i.warnings) });
  blocks.push({ kind: "button", label: "Review the scans", href: i.link });
  return renderLayout({
    studio: i.studio,
    subject: c.failed ? `Intake finished with ${plural(c.failed, "failed scan")}: ${i.name}` : `Intake finished: ${i.name}`,
    preheader: outcome,
    heading: "An intake is finished",
    blocks,
    footer: NOTICE_FOOTER(i.studio),
  });
}

export interface ScanFailedInput {
  studio: string;
  scanName: string;
  intakeName: string;
  error: string;
  link: string;
  failedAt: Date;
}

export function scanFailedMessage(s: ScanFailedInput): Message {
  return renderLayout({
    studio: s.studio,
    subject: `A scan failed: ${s.scanName}`,
    preheader: s.error,
    heading: "A scan failed",
    blocks: [
      {
        kind: "paragraph",
        text: `Platen could not finish the scan “${s.scanName}” (intake “${s.intakeName}”) on ${formatWhen(s.failedAt)}.`,
      },
      { kind: "list", tone: "failure", title: "The reason", items: [s.error] },
      {
        kind: "paragraph",
        text: "The original stays in the library, unchanged. Fix the cause and retry the scan from its page, or scan the piece again.",
      },
      { kind: "button", label: "Open the scan", href: s.link },
    ],
    footer: NOTICE_FOOTER(s.studio),
  });
}
