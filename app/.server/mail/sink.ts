import { mkdirSync, writeFileSync } from "node:fs";
import path from "node:path";
import { SMTPServer } from "smtp-server";

export type Sink = { port: number; dir: string; close: () => Promise<void> };

// A local SMTP sink for development and tests: it accepts every message on loopback and keeps it as an .eml file.
export async function startSink(options: { port: number; dir: string; host?: string }): Promise<Sink> {
  mkdirSync(options.dir, { recursive: true });
  let counter = 0;
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ["AUTH", "STARTTLS"],
    logger: false,
    size: 10 * 1024 * 1024,
    onData(stream, session, callback) {
      const chunks: Buffer[] = [];
      stream.on("data", (c: Buffer) => chunks.push(c));
      stream.on("end", () => {
        const name = `${Date.now().toString().padStart(15, "0")}-${process.pid}-${String(++counter).padStart(6, "0")}.eml`;
        const envelope = `X-Sink-Envelope-To: ${session.envelope.rcptTo.map((r) => r.address).join(", ")}\r\n`;
        writeFileSync(path.join(options.dir, name), Buffer.concat([Buffer.from(envelope), ...chunks]));
        callback();
      });
    },
  });
  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(options.port, options.host ?? "127.0.0.1", () => resolve());
  });
  // A sender that goes away mid-message (an app process killed by a test) is its own problem, not the sink's.
  server.on("error", () => undefined);
  const address = server.server.address();
  const port = typeof address === "object" && address ? address.port : options.port;
  return { port, dir: options.dir, close: () => new Promise<void>((r) => server.close(() => r())) };
}
