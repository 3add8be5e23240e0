import { Link } from "react-router";
import type { Route } from "./+types/dev.mailbox";
import { listMailbox, requireLocalMailbox } from "~/.server/mail/mailbox";

export const meta: Route.MetaFunction = () => [{ title: "Local mailbox · Bandledger" }];

// A development aid for this machine's own browser while the local mailbox is switched on, absent otherwise.
export async function loader(_: Route.LoaderArgs) {
  const { dir } = requireLocalMailbox();
  const messages = await listMailbox(dir);
  return { messages: messages.map((m) => ({ ...m, receivedAt: m.receivedAt.toISOString() })) };
}

export default function DevMailbox({ loaderData }: Route.ComponentProps) {
  return (
    <section className="space-y-4" aria-labelledby="mailbox-title">
      <div>
        <p className="label">Development only</p>
        <h1 id="mailbox-title" className="mt-1 text-2xl font-semibold tracking-tight">Local mailbox</h1>
        <p className="mt-1 text-sm text-muted">
          Every message Bandledger sent to the local mail sink, newest first. Nothing here left this machine, and only a browser on this machine can open it.
        </p>
      </div>
      {loaderData.messages.length === 0 ? (
        <p className="card p-4 text-sm text-muted">The mailbox is empty. Ask for a sign-in code or invite someone, and the message appears here.</p>
      ) : (
        <div className="card overflow-x-auto">
          <table className="w-full text-left text-sm">
            <thead className="text-xs text-muted uppercase">
              <tr><th className="px-3 py-2">Received (UTC)</th><th className="px-3">To</th><th className="px-3">Subject</th></tr>
            </thead>
            <tbody>
              {loaderData.messages.map((m) => (
                <tr key={m.file} className="border-t border-rule">
                  <td className="px-3 py-1.5 whitespace-nowrap tabular-nums">{m.receivedAt.slice(0, 10)} {m.receivedAt.slice(11, 19)}</td>
                  <td className="px-3 py-1.5">{m.to}</td>
                  <td className="px-3 py-1.5"><Link to={`/dev/mailbox/${m.file}`}>{m.subject}</Link></td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
    </section>
  );
}
