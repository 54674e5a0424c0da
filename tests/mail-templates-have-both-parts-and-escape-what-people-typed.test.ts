import { describe, expect, it } from "vitest";
import { simpleParser } from "mailparser";
import nodemailer from "nodemailer";
import {
  batchFinishedMessage,
  formatDuration,
  formatWhen,
  intakeFinishedMessage,
  invitationMessage,
  passwordResetMessage,
  scanFailedMessage,
} from "../server/mail/templates";
import { escapeHtml } from "../server/mail/layout";

const when = new Date("2026-07-03T14:05:00Z");
const LINK = 'http://127.0.0.1:5480/join#token=abc_DEF-123&x="1"<b>';

const all = () => [
  invitationMessage({
    studio: "Paper & Glue",
    email: "ana@studio.example",
    role: "viewer",
    inviter: "Mo",
    link: LINK,
    expiresAt: when,
    validForMs: 7 * 86_400_000,
  }),
  passwordResetMessage({ studio: "Paper & Glue", name: "Ana", link: LINK, expiresAt: when, validForMs: 3_600_000 }),
  batchFinishedMessage({
    studio: "Paper & Glue",
    name: "Shop squares",
    link: LINK,
    finishedAt: when,
    counts: { total: 3, done: 2, failed: 1, cancelled: 0 },
    warnings: ["bed-02 #1 (Print A4): 212 DPI at this size"],
    failures: [{ what: "bed-02 #3", error: "The master is missing." }],
  }),
  intakeFinishedMessage({
    studio: "Paper & Glue",
    name: "June pass",
    link: LINK,
    counts: { scans: 4, ready: 3, failed: 1, duplicates: 0, pieces: 17 },
    warnings: [],
    failures: [{ what: "bed-04.tif", error: "The file is empty (0 bytes)" }],
  }),
  scanFailedMessage({
    studio: "Paper & Glue",
    scanName: "bed-04.tif",
    intakeName: "June pass",
    error: "The file is empty (0 bytes)",
    link: LINK,
    failedAt: when,
  }),
];

describe("mail templates", () => {
  it("every message has a subject, a plain-text part and an HTML part with the studio and the link", () => {
    for (const m of all()) {
      expect(m.subject.length).toBeGreaterThan(5);
      expect(m.text).toContain("Paper & Glue · Platen");
      expect(m.text).toContain(LINK);
      expect(m.text.replaceAll(LINK, "")).not.toMatch(/<[a-z]/i);
      expect(m.html).toMatch(/^<!doctype html>/);
      expect(m.html).toContain("Paper &amp; Glue");
      // The link, escaped for the attribute: the quote and angle brackets cannot end it early.
      expect(m.html).toContain(`href="${escapeHtml(LINK)}"`);
      expect(m.html).not.toContain(LINK);
      expect(m.html).not.toContain("<b>");
    }
  });

  it("a name or file name people typed cannot add markup", () => {
    const hostile = `<img src=x onerror="alert(1)"><a href="http://evil.example">`;
    const parts = [
      invitationMessage({
        studio: hostile,
        email: "a@b.example",
        role: "operator",
        inviter: hostile,
        link: "https://platen.example/join#token=t",
        expiresAt: when,
        validForMs: 86_400_000,
      }),
      passwordResetMessage({
        studio: "S",
        name: hostile,
        link: "https://platen.example/reset-password#token=t",
        expiresAt: when,
        validForMs: 3_600_000,
      }),
      scanFailedMessage({
        studio: "S",
        scanName: hostile,
        intakeName: hostile,
        error: hostile,
        link: "https://platen.example/scans/1",
        failedAt: when,
      }),
      batchFinishedMessage({
        studio: "S",
        name: hostile,
        link: "https://platen.example/b",
        finishedAt: when,
        counts: { total: 1, done: 0, failed: 1, cancelled: 0 },
        warnings: [hostile],
        failures: [{ what: hostile, error: hostile }],
      }),
    ];
    for (const m of parts) {
      expect(m.html).not.toContain("<img");
      expect(m.html).not.toContain('href="http://evil.example"');
      expect(m.html).toContain("&lt;img src=x onerror=&quot;alert(1)&quot;&gt;");
      // The plain part says it as typed: plain text cannot run.
      expect(m.text).toContain(hostile);
    }
  });

  it("refuses a link that is not http(s)", () => {
    expect(() =>
      invitationMessage({
        studio: "S",
        email: "a@b.example",
        role: "viewer",
        inviter: null,
        link: "javascript:alert(1)",
        expiresAt: when,
        validForMs: 1,
      }),
    ).toThrow("Refusing a javascript: link in a message");
  });

  it("says what happened in plain words, with counts", () => {
    const [invite, reset, batch, intake, failed] = all();
    expect(invite!.subject).toBe("You are invited to Paper & Glue on Platen");
    expect(invite!.text).toContain("Mo invited you (ana@studio.example)");
    expect(invite!.text).toContain("Your role: Viewer: Browses approved work and downloads copies");
    expect(invite!.text).toContain("Link valid until: 3 July 2026, 14:05 UTC");
    expect(reset!.text).toContain("Choosing a new password signs you out everywhere else.");
    expect(batch!.subject).toBe("Batch finished with 1 failure: Shop squares");
    expect(batch!.text).toContain("2 of 3 made, 1 failed");
    expect(batch!.text).toContain("  - bed-02 #3: The master is missing.");
    expect(batch!.text).toContain("  - bed-02 #1 (Print A4): 212 DPI at this size");
    expect(intake!.subject).toBe("Intake finished with 1 failed scan: June pass");
    expect(intake!.text).toContain("17 pieces found");
    expect(failed!.subject).toBe("A scan failed: bed-04.tif");
    expect(failed!.text).toContain("The file is empty (0 bytes)");
    // Operators and admins get the notices with their role, unasked: the footer says how to stop
    // one, and never that the person chose it.
    for (const notice of [batch!, intake!, failed!]) {
      expect(notice.text).toContain(
        "--\nYou get this because this notice is on for your account in Platen for Paper & Glue. Turn it off under Your account → Notices.",
      );
      expect(notice.text).not.toMatch(/you chose/i);
    }
    for (const personal of [invite!, reset!]) expect(personal.text).not.toContain("Your account → Notices");
  });

  it("keeps a subject on one header line when a scan's file name holds line breaks", async () => {
    // Linux allows any byte but "/" and NUL in a file name, so a scan dropped in the inbox can be
    // named with a line break; RFC 5322 §2.2 ends a header field at CRLF, so one left in would
    // start a header of its own.
    const m = scanFailedMessage({
      studio: "Paper & Glue",
      scanName: "bed-04\r\nBcc: someone@else.example\t.tif",
      intakeName: "June pass",
      error: "The file is empty (0 bytes)",
      link: LINK,
      failedAt: when,
    });
    expect(m.subject).toBe("A scan failed: bed-04 Bcc: someone@else.example .tif");
    const transport = nodemailer.createTransport({ streamTransport: true, buffer: true });
    const info = await transport.sendMail({
      from: "platen@localhost",
      to: "ana@studio.example",
      subject: m.subject,
      text: m.text,
      html: m.html,
    });
    const parsed = await simpleParser(info.message as Buffer);
    expect(parsed.subject).toBe(m.subject);
    expect(parsed.bcc).toBeUndefined();
    expect(parsed.headers.has("bcc")).toBe(false);
    expect(m.html).toContain("<title>A scan failed: bed-04 Bcc: someone@else.example .tif</title>");
  });

  it("formats times and durations without ambiguity", () => {
    expect(formatWhen(new Date("2026-01-02T03:04:00Z"))).toBe("2 January 2026, 03:04 UTC");
    expect(formatDuration(7 * 86_400_000)).toBe("7 days");
    expect(formatDuration(3_600_000)).toBe("1 hour");
    expect(formatDuration(90 * 60_000)).toBe("90 minutes");
  });

  it("builds a MIME message that a mail parser reads back as text and HTML alternatives", async () => {
    const m = all()[0]!;
    const transport = nodemailer.createTransport({ streamTransport: true, buffer: true });
    const info = await transport.sendMail({
      from: "platen@localhost",
      to: "ana@studio.example",
      subject: m.subject,
      text: m.text,
      html: m.html,
    });
    const raw = (info.message as Buffer).toString("utf8");
    expect(raw).toMatch(/Content-Type: multipart\/alternative/);
    const parsed = await simpleParser(info.message as Buffer);
    expect(parsed.subject).toBe(m.subject);
    expect(parsed.text?.trim()).toBe(m.text.trim());
    expect(parsed.html).toBe(m.html);
  });
});
