import { afterAll, describe, expect, it } from "vitest";
import { SMTPServer } from "smtp-server";
import type { AddressInfo } from "node:net";
import { outbox, subscriptions, users, problems } from "~/db/schema";
import { sendMail, stopStandin } from "~/services/mail.server";
import { decodeHeader, decodeQuotedPrintable, startSmtpStandin } from "~/services/smtp-standin.server";
import { sendRegressionAlerts } from "~/services/alerts.server";
import type { Finding } from "~/runs/rules";
import { tempDb, tempDir } from "./helpers";

afterAll(async () => {
  await stopStandin();
});

const commit = { commitHash: "0123456789abcdef0123456789abcdef01234567", branch: "main", dirty: false, subject: "Tighten barrier update", author: "A. Tester <a@example.com>", date: new Date() };

describe("e-mail", () => {
  it("the stand-in on loopback receives a message and keeps it in the outbox", async () => {
    const db = tempDb(tempDir("mail"));
    const subject = "[Arcwatch] 1 regression in suite quick at 0123456789: speed pika-rover-dash/lgr/8x4 ×1.32 — ü";
    const res = await sendMail(db, { to: "Lead@Example.com", subject, text: "median 0.10 s → 0.13 s\nline two with ünïcode and a very long line ".repeat(3) }, {});
    expect(res.via).toBe("standin");
    const rows = db.select().from(outbox).all();
    expect(rows).toHaveLength(1);
    expect(rows[0].to).toBe("lead@example.com");
    expect(rows[0].subject).toBe(subject);
    expect(rows[0].body).toContain("line two with ünïcode");
    expect(rows[0].sentAt).toBeInstanceOf(Date);
    await stopStandin();
    db.$client.close();
  });

  it("real SMTP via SMTP_HOST/SMTP_PORT reaches an smtp-server on loopback with the expected subject", async () => {
    const db = tempDb(tempDir("mail2"));
    const received: { subject: string; rcpt: string[]; auth: string | null }[] = [];
    const server = new SMTPServer({
      disabledCommands: ["STARTTLS"],
      allowInsecureAuth: true,
      logger: false,
      onAuth(auth, _session, cb) {
        cb(null, { user: auth.username });
      },
      onData(stream, session, cb) {
        let raw = "";
        stream.on("data", (c: Buffer) => (raw += c.toString("utf8")));
        stream.on("end", () => {
          const m = /^subject:\s*(.*(?:\r?\n[ \t].*)*)/im.exec(raw);
          received.push({ subject: decodeHeader((m?.[1] ?? "").replace(/\r?\n[ \t]+/g, " ")), rcpt: session.envelope.rcptTo.map((r) => r.address), auth: session.user ? String(session.user) : null });
          cb();
        });
      },
    });
    await new Promise<void>((r) => server.listen(0, "127.0.0.1", () => r()));
    const port = (server.server.address() as AddressInfo).port;
    const env = { SMTP_HOST: "127.0.0.1", SMTP_PORT: String(port), SMTP_USER: "bot", SMTP_PASS: "pw", SMTP_FROM: "Arcwatch CI <ci@example.com>" };
    const res = await sendMail(db, { to: ["a@example.com", "b@example.com"], subject: "Arcwatch: accuracy regression", text: "body" }, env);
    expect(res.via).toBe("smtp");
    expect(received).toHaveLength(1);
    expect(received[0].subject).toBe("Arcwatch: accuracy regression");
    expect(received[0].rcpt).toEqual(["a@example.com", "b@example.com"]);
    expect(received[0].auth).toBe("bot");
    expect(db.select().from(outbox).all().map((r) => r.to)).toEqual(["a@example.com", "b@example.com"]);
    await new Promise<void>((r) => server.close(() => r()));
    db.$client.close();
  });

  it("alerts go to subscribers of the problem or the suite, once per person", async () => {
    const db = tempDb(tempDir("mail3"));
    db.insert(problems).values([{ id: "pika-rover-dash", title: "Pika" }, { id: "tern-orbit-raise", title: "Tern" }]).run();
    const mk = (email: string) => db.insert(users).values({ email, name: email, passwordHash: "x" }).returning({ id: users.id }).get().id;
    const a = mk("a@example.com");
    const b = mk("b@example.com");
    const c = mk("c@example.com");
    db.insert(subscriptions).values([{ userId: a, problemId: "pika-rover-dash" }, { userId: b, suiteName: "quick" }, { userId: b, problemId: "pika-rover-dash" }, { userId: c, problemId: "tern-orbit-raise" }]).run();
    const f: Finding = { caseKey: "pika-rover-dash/lgr/8x4", problemId: "pika-rover-dash", kind: "speed", direction: "regression", metric: "median_seconds", before: 0.1, after: 0.132, ratio: 1.32, pValue: 0.001, ciLow: 1.2, ciHigh: 1.45, detail: "median 0.100 s → 0.132 s" };
    const res = await sendRegressionAlerts(db, { runId: "r1", suiteName: "quick", commit, regressions: [{ id: 7, finding: f }], baseUrl: "http://arcwatch.test" });
    expect(res.errors).toEqual([]);
    expect(res.sent.map((s) => s.to).sort()).toEqual(["a@example.com", "b@example.com"]);
    const rows = db.select().from(outbox).all();
    expect(rows).toHaveLength(2);
    expect(rows[0].subject).toBe("[Arcwatch] 1 regression in suite quick at 0123456789: speed pika-rover-dash/lgr/8x4 ×1.32");
    expect(rows[0].body).toContain("http://arcwatch.test/regressions/7");
    expect(rows[0].body).toContain("Tighten barrier update");
    await stopStandin();
    db.$client.close();
  });

  it("hands mail to a stand-in already listening on ARCWATCH_STANDIN_PORT (the server's)", async () => {
    const serverDb = tempDb(tempDir("mail4"));
    const cliDb = tempDb(tempDir("mail5"));
    const running = await startSmtpStandin(serverDb);
    process.env.ARCWATCH_STANDIN_PORT = String(running.port);
    try {
      await stopStandin();
      const res = await sendMail(cliDb, { to: "ops@example.com", subject: "handed over", text: "x" }, {});
      expect(res.via).toBe("standin");
      expect(serverDb.select().from(outbox).all().map((r) => r.subject)).toEqual(["handed over"]);
      expect(cliDb.select().from(outbox).all()).toEqual([]);
    } finally {
      delete process.env.ARCWATCH_STANDIN_PORT;
      await stopStandin();
      await running.close();
    }
  });

  it("decodes quoted-printable and encoded words", () => {
    expect(decodeQuotedPrintable("caf=C3=A9 =\r\nau lait")).toBe("café au lait");
    expect(decodeHeader("=?UTF-8?Q?=C3=97_1.3?= =?UTF-8?B?4oaS?=")).toBe("× 1.3→");
  });
});
