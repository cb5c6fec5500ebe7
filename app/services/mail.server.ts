/**
 * Outgoing mail through nodemailer.
 *
 * - Real SMTP when SMTP_HOST is set: SMTP_PORT (default 587; 465 means implicit TLS),
 *   SMTP_USER / SMTP_PASS (optional authentication), SMTP_FROM (sender, default
 *   "Arcwatch <arcwatch@localhost>"). Each attempt is also logged in the outbox table
 *   (sent_at on success, error otherwise) so admins see what went out.
 * - Otherwise the local stand-in (./smtp-standin.server.ts): an SMTP server on loopback started
 *   on first use in this process (port ARCWATCH_STANDIN_PORT or any free port); it stores every
 *   received message in the outbox table. If ARCWATCH_STANDIN_PORT is already taken (the server's
 *   stand-in), messages are handed to that one.
 */
import nodemailer, { type Transporter } from "nodemailer";
import type { Db } from "../db/client.server";
import { outbox } from "../db/schema";
import { startSmtpStandin, type SmtpStandin } from "./smtp-standin.server";

export interface MailMessage {
  to: string | string[];
  subject: string;
  text: string;
}

export interface MailResult {
  via: "smtp" | "standin";
  messageId: string;
  accepted: string[];
}

export const DEFAULT_FROM = "Arcwatch <arcwatch@localhost>";

export interface SmtpSettings {
  host: string;
  port: number;
  user?: string;
  pass?: string;
  from: string;
}

/** Real SMTP settings from the environment, or null when SMTP_HOST is unset. */
export function smtpSettingsFromEnv(env: NodeJS.ProcessEnv = process.env): SmtpSettings | null {
  const host = env.SMTP_HOST?.trim();
  if (!host) return null;
  const port = env.SMTP_PORT ? Number(env.SMTP_PORT) : 587;
  if (!Number.isInteger(port) || port <= 0 || port > 65535) throw new Error(`SMTP_PORT must be a port number, got "${env.SMTP_PORT}"`);
  return { host, port, user: env.SMTP_USER || undefined, pass: env.SMTP_PASS || undefined, from: env.SMTP_FROM?.trim() || DEFAULT_FROM };
}

let standin: { db: Db; server: SmtpStandin } | null = null;

/** The process's stand-in server for `db`, started on first use. */
export async function ensureStandin(db: Db): Promise<SmtpStandin> {
  if (standin && standin.db === db) return standin.server;
  if (standin) await standin.server.close();
  const port = process.env.ARCWATCH_STANDIN_PORT ? Number(process.env.ARCWATCH_STANDIN_PORT) : 0;
  try {
    standin = { db, server: await startSmtpStandin(db, { port }) };
  } catch (err) {
    // A fixed port already taken: the Arcwatch server's own stand-in is listening there (it writes
    // into its database, normally the same file); hand mail to it instead of failing.
    if ((err as NodeJS.ErrnoException).code !== "EADDRINUSE" || port === 0) throw err;
    standin = { db, server: { host: "127.0.0.1", port, close: async () => {} } };
  }
  return standin.server;
}

/** Stops the in-process stand-in, if started (command-line exit, tests). */
export async function stopStandin(): Promise<void> {
  if (standin) await standin.server.close();
  standin = null;
}

function transportFor(settings: SmtpSettings): Transporter {
  return nodemailer.createTransport({
    host: settings.host,
    port: settings.port,
    secure: settings.port === 465,
    auth: settings.user ? { user: settings.user, pass: settings.pass ?? "" } : undefined,
  });
}

/** Sends one message (to one or several recipients). */
export async function sendMail(db: Db, message: MailMessage, env: NodeJS.ProcessEnv = process.env): Promise<MailResult> {
  const to = Array.isArray(message.to) ? message.to : [message.to];
  if (to.length === 0) throw new Error("sendMail: no recipient");
  const smtp = smtpSettingsFromEnv(env);
  if (smtp) {
    const transport = transportFor(smtp);
    try {
      const info = await transport.sendMail({ from: smtp.from, to, subject: message.subject, text: message.text });
      const now = new Date();
      db.transaction((tx) => {
        for (const r of to) tx.insert(outbox).values({ to: r, subject: message.subject, body: message.text, sentAt: now, attempts: 1 }).run();
      });
      return { via: "smtp", messageId: info.messageId, accepted: (info.accepted as unknown[]).map(String) };
    } catch (err) {
      db.transaction((tx) => {
        for (const r of to) tx.insert(outbox).values({ to: r, subject: message.subject, body: message.text, attempts: 1, error: (err as Error).message }).run();
      });
      throw err;
    } finally {
      transport.close();
    }
  }
  const server = await ensureStandin(db);
  const transport = nodemailer.createTransport({ host: server.host, port: server.port, secure: false, ignoreTLS: true });
  try {
    const info = await transport.sendMail({ from: DEFAULT_FROM, to, subject: message.subject, text: message.text });
    return { via: "standin", messageId: info.messageId, accepted: (info.accepted as unknown[]).map(String) };
  } finally {
    transport.close();
  }
}
