import { startSink } from "./sink";
import { env } from "../env";

const port = Number(process.env.BANDLEDGER_SMTP_PORT ?? new URL(env().SMTP_URL).port ?? 2525);
try {
  const sink = await startSink({ port, dir: env().mailboxDir });
  console.error(`bandledger: local mail sink on 127.0.0.1:${sink.port}, keeping messages in ${sink.dir}`);
  const stop = () => void sink.close().finally(() => process.exit(0));
  process.once("SIGTERM", stop);
  process.once("SIGINT", stop);
} catch (e) {
  const code = (e as { code?: string }).code;
  console.error(code === "EADDRINUSE" ? `bandledger: port ${port} for the mail sink is taken; set SMTP_URL to another port` : `bandledger: mail sink failed: ${(e as Error).message}`);
  process.exit(1);
}
