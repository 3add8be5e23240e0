import type { Route } from "./+types/materials";
import { db } from "~/.server/db/client";
import { requireUser } from "~/.server/permissions";
import { listMaterialsByFamily } from "~/.server/registry/material-page";

export const meta: Route.MetaFunction = () => [{ title: "Materials · Bandledger" }];

const STRUCTURES = { diamond: "diamond", zinc_blende: "zinc blende", wurtzite: "wurtzite" } as const;
const KINDS = { element: "element", binary: "binary", alloy: "alloy" } as const;

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  return { families: await listMaterialsByFamily(db()) };
}

export default function Materials({ loaderData }: Route.ComponentProps) {
  const { families } = loaderData;
  return (
    <div className="space-y-5">
      <header>
        <p className="label">Materials</p>
        <h1 className="mt-1 text-2xl font-semibold tracking-tight">Materials by family</h1>
        <p className="mt-1 text-sm text-muted">Each material page lists its current values with their provenance and history.</p>
      </header>
      {families.every((f) => f.materials.length === 0) ? (
        <p className="card p-6 text-sm text-muted">No materials are filed yet.</p>
      ) : null}
      {families.map((f) => (
        <section key={f.key} className="card" aria-labelledby={`family-${f.key}`}>
          <div className="border-b border-rule px-4 py-2">
            <h2 id={`family-${f.key}`} className="font-semibold">{f.name}</h2>
            {f.description ? <p className="text-xs text-muted">{f.description}</p> : null}
          </div>
          {f.materials.length === 0 ? (
            <p className="px-4 py-3 text-sm text-muted">No materials in this family yet.</p>
          ) : (
            <table className="w-full text-sm">
              <thead className="text-left text-xs text-muted uppercase">
                <tr>
                  <th scope="col" className="px-4 py-1.5">Material</th>
                  <th scope="col" className="px-4 py-1.5">Formula</th>
                  <th scope="col" className="px-4 py-1.5">Kind</th>
                  <th scope="col" className="px-4 py-1.5">Structure</th>
                  <th scope="col" className="px-4 py-1.5 text-right">Current values</th>
                </tr>
              </thead>
              <tbody>
                {f.materials.map((m) => (
                  <tr key={m.key} className="border-t border-rule">
                    <td className="px-4 py-1.5"><a href={`/materials/${encodeURIComponent(m.key)}`} className="font-medium">{m.key}</a> <span className="text-muted">{m.name}</span></td>
                    <td className="px-4 py-1.5 font-mono">{m.formula}</td>
                    <td className="px-4 py-1.5">{KINDS[m.kind]}</td>
                    <td className="px-4 py-1.5">{STRUCTURES[m.structure]}</td>
                    <td className="num px-4 py-1.5 text-right">{m.activeRecords}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          )}
        </section>
      ))}
    </div>
  );
}
