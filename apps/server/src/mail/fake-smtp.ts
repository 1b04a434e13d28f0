import { mkdirSync, writeFileSync } from "node:fs";
import path from "node:path";
import { SMTPServer } from "smtp-server";
import { simpleParser } from "mailparser";

/**
 * A local stand-in for the site's mail server: a real SMTP server (the `smtp-server` package) on
 * loopback that accepts every message, parses it (mailparser) and keeps it, in memory for tests and as
 * an .eml file under `dir` for people. No TLS, no authentication: it only ever listens on 127.0.0.1.
 */
export interface StoredMail {
  /** Envelope recipients (RCPT TO), which is where the mail really goes. */
  to: string[];
  from: string;
  subject: string;
  text: string;
  receivedAt: string;
  file: string | null;
}

export interface FakeSmtp {
  port: number;
  messages: StoredMail[];
  /** Resolves once at least `count` messages have arrived (or rejects after timeoutMs). */
  waitFor(count: number, timeoutMs?: number): Promise<StoredMail[]>;
  close(): Promise<void>;
}

export class SmtpPortInUseError extends Error {}

export async function startFakeSmtp(options: { host?: string; port: number; dir?: string | null }): Promise<FakeSmtp> {
  const host = options.host ?? "127.0.0.1";
  const dir = options.dir ?? null;
  if (dir) mkdirSync(dir, { recursive: true });
  const messages: StoredMail[] = [];
  const waiters: (() => void)[] = [];

  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ["STARTTLS", "AUTH"],
    banner: "Jogwright local mail catcher",
    logger: false,
    onData(stream, session, callback) {
      const chunks: Buffer[] = [];
      stream.on("data", (c: Buffer) => chunks.push(c));
      stream.on("end", () => {
        const raw = Buffer.concat(chunks);
        simpleParser(raw)
          .then((parsed) => {
            const receivedAt = new Date().toISOString();
            let file: string | null = null;
            if (dir) {
              file = path.join(dir, `${receivedAt.replace(/[:.]/g, "-")}-${messages.length + 1}.eml`);
              writeFileSync(file, raw);
            }
            messages.push({
              to: session.envelope.rcptTo.map((r) => r.address),
              from: session.envelope.mailFrom ? session.envelope.mailFrom.address : "",
              subject: parsed.subject ?? "",
              text: parsed.text ?? "",
              receivedAt,
              file,
            });
            for (const w of waiters.splice(0)) w();
            callback();
          })
          .catch((error: Error) => callback(error));
      });
    },
  });

  await new Promise<void>((resolve, reject) => {
    const onError = (error: NodeJS.ErrnoException) =>
      reject(error.code === "EADDRINUSE" ? new SmtpPortInUseError(`SMTP port ${options.port} on ${host} is already in use`) : error);
    // SMTPServer re-emits its socket's errors on itself; an unheard one would crash the process.
    server.once("error", onError);
    server.listen(options.port, host, () => {
      server.off("error", onError);
      resolve();
    });
  });
  server.on("error", (error) => console.error("[jogwright] fake SMTP:", error.message));
  const address = server.server.address();
  const port = typeof address === "object" && address ? address.port : options.port;

  return {
    port,
    messages,
    waitFor(count, timeoutMs = 5000) {
      return new Promise((resolve, reject) => {
        const deadline = setTimeout(() => reject(new Error(`expected ${count} mails, got ${messages.length}`)), timeoutMs);
        const check = () => {
          if (messages.length >= count) {
            clearTimeout(deadline);
            resolve(messages);
          } else waiters.push(check);
        };
        check();
      });
    },
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
  };
}
