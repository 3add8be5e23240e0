import type { Route } from "./+types/api-docs";
import { openApiDocument } from "~/.server/api/openapi";
import { env } from "~/.server/env";
import { requireUser } from "~/.server/permissions";

export const meta: Route.MetaFunction = () => [{ title: "API · Bandledger" }];

type Endpoint = { method: string; path: string; summary: string; description: string | null; deprecated: boolean; parameters: { name: string; in: string; required: boolean; description: string | null }[]; hasBody: boolean; statuses: string[] };

const EXAMPLE_PARAMS: Record<string, string> = { slug: "hemt-baseline", number: "3", id: "1" };

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  const doc = openApiDocument() as unknown as { paths: Record<string, Record<string, { summary?: string; description?: string; deprecated?: boolean; parameters?: { name: string; in: string; required?: boolean; description?: string; schema?: { description?: string } }[]; requestBody?: unknown; responses?: Record<string, unknown> }>> };
  const endpoints: Endpoint[] = [];
  for (const [path, methods] of Object.entries(doc.paths)) {
    for (const [method, op] of Object.entries(methods)) {
      endpoints.push({
        method: method.toUpperCase(),
        path,
        summary: op.summary ?? "",
        description: op.description ?? null,
        deprecated: Boolean(op.deprecated),
        parameters: (op.parameters ?? []).map((p) => ({ name: p.name, in: p.in, required: Boolean(p.required), description: p.description ?? p.schema?.description ?? null })),
        hasBody: Boolean(op.requestBody),
        statuses: Object.keys(op.responses ?? {}),
      });
    }
  }
  return { endpoints, baseUrl: env().BANDLEDGER_PUBLIC_URL.replace(/\/$/, "") };
}

const NFE_EXAMPLE = '{"periodAngstrom":5.65325,"coefficients":[{"n":1,"valueEv":0.1}],"statedGapEv":0.2}';
const EPM_EXAMPLE = '{"structure":"diamond","latticeAngstrom":5.43,"formFactors":{"S3":-0.21,"S8":0.04,"S11":0.08},"stated":{"gammaEv":3.4}}';

function curlFor(e: Endpoint, baseUrl: string): string {
  const path = e.path.replace(/\{(\w+)\}/g, (_, name: string) => EXAMPLE_PARAMS[name] ?? name);
  const query = e.path.endsWith("/download") ? "?format=csv" : e.path.endsWith("/evaluate") ? "?temperature=77&material=AlGaAs&x=0.3&substrate=GaAs" : e.path.endsWith("/compare") ? "?from=2&to=3" : e.path.endsWith("/records") ? "?material=GaAs&quantity=eg&limit=50" : "";
  const auth = e.path.endsWith("openapi.json") ? "" : ' -H "Authorization: Bearer $BANDLEDGER_TOKEN"';
  if (e.method === "POST" && e.path.endsWith("/nfe")) return `curl -s${auth} -H "Content-Type: application/json" -d '${NFE_EXAMPLE}' ${baseUrl}${path}`;
  if (e.method === "POST" && e.path.endsWith("/epm")) return `curl -s${auth} -H "Content-Type: application/json" -d '${EPM_EXAMPLE}' ${baseUrl}${path}`;
  if (e.method === "POST") return `# from a signed-in browser page only; tokens are read-only`;
  const out = e.path.endsWith("/download") ? " --compressed -o hemt-baseline-r3.csv" : "";
  return `curl -sf${auth}${out} "${baseUrl}${path}${query}"`;
}

export default function ApiDocs({ loaderData }: Route.ComponentProps) {
  const { endpoints, baseUrl } = loaderData;
  return (
    <div className="space-y-8">
      <header className="max-w-3xl space-y-2">
        <p className="label">API v1</p>
        <h1 className="text-2xl font-semibold tracking-tight">Read the registry and the frozen sets from scripts</h1>
        <p className="text-sm text-muted">
          JSON under <code className="font-mono">/api/v1</code>. Every call needs a personal read token or a signed-in browser. Errors answer
          {" "}<code className="font-mono">{'{"error":{"code","message","field"}}'}</code> with status 400, 401, 403, 404, 409, 422 or 429
          (429 carries Retry-After). Measured numbers are decimal strings, never floats. The machine-readable description is
          {" "}<a href="/api/v1/openapi.json">/api/v1/openapi.json</a> (OpenAPI 3.1); this page is drawn from it.
        </p>
      </header>
      <section className="card max-w-3xl space-y-2 p-5 text-sm">
        <h2 className="font-semibold">Getting a token</h2>
        <ol className="list-decimal space-y-1 pl-5">
          <li>Open <a href="/account">your account</a> and create a token under “API tokens”, named after the pipeline that uses it.</li>
          <li>Copy it once (it starts with <code className="font-mono">blt_</code>); Bandledger keeps only its hash.</li>
          <li>Send it as <code className="font-mono">Authorization: Bearer blt_…</code>, or set <code className="font-mono">BANDLEDGER_TOKEN</code> for the command line.</li>
        </ol>
        <p>A token reads what its owner may read, and nothing more; downloads by token are written to the audit log. Revoke it on the same page.</p>
        <pre className="overflow-x-auto rounded bg-paper p-3 font-mono text-xs">{`export BANDLEDGER_TOKEN=blt_…
npm run --silent bandledger -- download hemt-baseline 3 --out hemt-baseline-r3.json --url ${baseUrl}
npm run --silent bandledger -- verify hemt-baseline-r3.json`}</pre>
      </section>
      <section className="space-y-4" aria-labelledby="endpoints-title">
        <h2 id="endpoints-title" className="text-lg font-semibold">Endpoints</h2>
        {endpoints.map((e) => (
          <article key={`${e.method} ${e.path}`} className="card space-y-2 p-4" data-endpoint={`${e.method} ${e.path}`}>
            <h3 className="font-mono text-sm">
              <span className={`mr-2 rounded px-1.5 py-0.5 text-xs font-semibold ${e.method === "GET" ? "bg-teal-soft text-teal" : "bg-copper-soft text-copper"}`}>{e.method}</span>
              {e.path}
              {e.deprecated ? <span className="ml-2 rounded border border-warn px-1.5 py-0.5 text-xs text-warn">old address, answered for one release</span> : null}
            </h3>
            <p className="text-sm">{e.summary}</p>
            {e.description ? <p className="text-sm text-muted">{e.description}</p> : null}
            {e.parameters.length ? (
              <ul className="text-xs text-muted">
                {e.parameters.map((p) => <li key={`${p.in}-${p.name}`}><code className="font-mono text-ink">{p.name}</code> ({p.in}{p.required ? ", required" : ""}){p.description ? ` — ${p.description}` : ""}</li>)}
              </ul>
            ) : null}
            <p className="text-xs text-muted">Answers: {e.statuses.join(", ")}</p>
            <pre className="overflow-x-auto rounded bg-paper p-2 font-mono text-xs">{curlFor(e, baseUrl)}</pre>
          </article>
        ))}
      </section>
    </div>
  );
}
