import { Fragment } from "react";
import { data, Link } from "react-router";
import type { Route } from "./+types/dev.mailbox.$file";
import { readMailboxMessage, requireLocalMailbox } from "~/.server/mail/mailbox";

export const meta: Route.MetaFunction = ({ data: d }) => [{ title: `${d?.message.subject ?? "Message"} · Local mailbox · Bandledger` }];

// For this machine's own browser while the local mailbox is on; the file name is checked against the sink's own pattern.
export async function loader({ params }: Route.LoaderArgs) {
  const { dir } = requireLocalMailbox();
  const message = await readMailboxMessage(dir, params.file);
  if (!message) throw data({ message: "Not found" }, { status: 404 });
  return { message: { ...message, receivedAt: message.receivedAt.toISOString() } };
}

function Linked({ text }: { text: string }) {
  const parts = text.split(/(https?:\/\/[^\s<>"]+)/g);
  return (
    <>
      {parts.map((p, i) => (i % 2 === 1 ? <a key={i} href={p} className="break-all">{p}</a> : <Fragment key={i}>{p}</Fragment>))}
    </>
  );
}

export default function DevMailboxMessage({ loaderData: { message } }: Route.ComponentProps) {
  return (
    <article className="space-y-4" aria-labelledby="message-title">
      <p className="text-sm"><Link to="/dev/mailbox">← Local mailbox</Link></p>
      <header>
        <h1 id="message-title" className="text-2xl font-semibold tracking-tight">{message.subject}</h1>
        <dl className="mt-2 grid grid-cols-[5rem_1fr] gap-x-3 text-sm">
          <dt className="text-muted">From</dt><dd>{message.from}</dd>
          <dt className="text-muted">To</dt><dd>{message.to}</dd>
          <dt className="text-muted">Received</dt><dd className="tabular-nums">{message.receivedAt.slice(0, 10)} {message.receivedAt.slice(11, 19)} UTC</dd>
        </dl>
      </header>
      <div className="grid gap-4 lg:grid-cols-2">
        <section className="card p-4" aria-labelledby="text-part">
          <h2 id="text-part" className="label">Text part</h2>
          <pre className="mt-2 font-mono text-xs whitespace-pre-wrap" data-testid="text-part"><Linked text={message.text} /></pre>
        </section>
        <section className="card p-4" aria-labelledby="html-part">
          <h2 id="html-part" className="label">HTML part</h2>
          {message.html ? (
            <iframe title="HTML part of the message" sandbox="" srcDoc={message.html} className="mt-2 h-[28rem] w-full rounded border border-rule bg-white" />
          ) : (
            <p className="mt-2 text-sm text-muted">This message has no HTML part.</p>
          )}
        </section>
      </div>
    </article>
  );
}
