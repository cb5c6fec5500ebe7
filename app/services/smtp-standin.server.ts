/**
 * The local stand-in mail service: an SMTP server (smtp-server) listening on loopback only,
 * which accepts every message and keeps it in the `outbox` table (one row per recipient,
 * `sent_at` = time received), where admins can read it. Arcwatch mails go here unless real SMTP
 * is configured (SMTP_HOST, see app/services/mail.server.ts and README "Benchmark runner").
 *
 * Only what nodemailer produces for a plain-text message is decoded: RFC 2047 encoded words
 * in the Subject (B and Q encodings) and a single text part in 7bit/8bit, quoted-printable
 * (RFC 2045 §6.7) or base64 transfer encoding. Anything else is stored as received.
 */
import { SMTPServer } from "smtp-server";
import type { AddressInfo } from "node:net";
import type { Db } from "../db/client.server";
import { outbox } from "../db/schema";

export interface SmtpStandin {
  host: string;
  port: number;
  close(): Promise<void>;
}

/** Decodes RFC 2047 encoded words (=?charset?B|Q?text?=) in a header value. */
export function decodeHeader(value: string): string {
  return value
    .replace(/\?=\s+=\?/g, "?==?") // whitespace between adjacent encoded words is dropped (RFC 2047 §6.2)
    .replace(/=\?([^?]+)\?([BbQq])\?([^?]*)\?=/g, (_m, charset: string, enc: string, text: string) => {
      const bytes = enc.toUpperCase() === "B" ? Buffer.from(text, "base64") : decodeQ(text.replace(/_/g, " "));
      return new TextDecoder(charset.toLowerCase() === "utf-8" || charset.toLowerCase() === "utf8" ? "utf-8" : "latin1").decode(bytes);
    });
}

function decodeQ(text: string): Buffer {
  const out: number[] = [];
  for (let i = 0; i < text.length; i++) {
    if (text[i] === "=" && /^[0-9A-Fa-f]{2}$/.test(text.slice(i + 1, i + 3))) {
      out.push(parseInt(text.slice(i + 1, i + 3), 16));
      i += 2;
    } else out.push(text.charCodeAt(i) & 0xff);
  }
  return Buffer.from(out);
}

/** Quoted-printable body: soft line breaks "=\r\n" removed, "=XX" decoded, as UTF-8. */
export function decodeQuotedPrintable(body: string): string {
  return new TextDecoder("utf-8").decode(decodeQ(body.replace(/=\r?\n/g, "")));
}

/** Splits a raw message into decoded headers (unfolded, lower-case names) and the decoded text body. */
export function parseMessage(raw: string): { headers: Map<string, string>; body: string } {
  const split = raw.search(/\r?\n\r?\n/);
  const head = split >= 0 ? raw.slice(0, split) : raw;
  let body = split >= 0 ? raw.slice(split).replace(/^\r?\n\r?\n/, "") : "";
  const headers = new Map<string, string>();
  for (const line of head.replace(/\r?\n[ \t]+/g, " ").split(/\r?\n/)) {
    const i = line.indexOf(":");
    if (i > 0) headers.set(line.slice(0, i).trim().toLowerCase(), line.slice(i + 1).trim());
  }
  const cte = (headers.get("content-transfer-encoding") ?? "7bit").toLowerCase();
  if (cte === "quoted-printable") body = decodeQuotedPrintable(body);
  else if (cte === "base64") body = Buffer.from(body.replace(/\s+/g, ""), "base64").toString("utf8");
  return { headers, body: body.replace(/\r\n/g, "\n").replace(/\n+$/, "") };
}

/**
 * Starts the stand-in on `host` (loopback only: 127.0.0.1 or ::1) and `port` (0 = any free port).
 * Received messages are inserted into `outbox` of `db`.
 */
export async function startSmtpStandin(db: Db, options: { host?: string; port?: number } = {}): Promise<SmtpStandin> {
  const host = options.host ?? "127.0.0.1";
  if (host !== "127.0.0.1" && host !== "::1" && host !== "localhost") throw new Error(`smtp stand-in: refusing to listen on ${host}; loopback only`);
  const server = new SMTPServer({
    disabledCommands: ["AUTH", "STARTTLS"],
    authOptional: true,
    logger: false,
    banner: "Arcwatch mail stand-in",
    size: 5 * 2 ** 20,
    onData(stream, session, callback) {
      const chunks: Buffer[] = [];
      stream.on("data", (c: Buffer) => chunks.push(c));
      stream.on("error", (err) => callback(err));
      stream.on("end", () => {
        try {
          const { headers, body } = parseMessage(Buffer.concat(chunks).toString("utf8"));
          const subject = decodeHeader(headers.get("subject") ?? "(no subject)");
          const recipients = session.envelope.rcptTo.map((r) => r.address.toLowerCase());
          const now = new Date();
          db.transaction((tx) => {
            for (const to of recipients) tx.insert(outbox).values({ to, subject, body, sentAt: now, attempts: 1 }).run();
          });
          callback();
        } catch (err) {
          callback(err as Error);
        }
      });
    },
  });
  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(options.port ?? 0, host, () => {
      server.off("error", reject);
      resolve();
    });
  });
  const address = server.server.address() as AddressInfo;
  return {
    host,
    port: address.port,
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
  };
}
