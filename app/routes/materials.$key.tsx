import { data } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/materials.$key";
import { db } from "~/.server/db/client";
import { loadDerivedValues } from "~/.server/derived";
import { requireUser } from "~/.server/permissions";
import { loadMaterialPage } from "~/.server/registry/material-page";
import { DerivedValues } from "~/components/derived";
import { MaterialOverview } from "~/components/registry/material-overview";
import { compareSchema } from "~/domain/registry-schemas";
import { pickRevisionPair } from "~/domain/revision-pair";

export const meta: Route.MetaFunction = ({ data: d }) => [{ title: d ? `${d.material.name} · Bandledger` : "Material · Bandledger" }];

const paramsSchema = z.object({ key: z.string().min(1).max(64) });

export async function loader({ request, params }: Route.LoaderArgs) {
  const { key } = paramsSchema.parse(params);
  const search = new URL(request.url).searchParams;
  const compare = compareSchema.parse(Object.fromEntries(search));
  await requireUser(request);
  const page = await loadMaterialPage(db(), key);
  if (!page) throw data({ message: `No material is filed under “${key}”.` }, { status: 404 });
  const record = compare.cmp ? page.records.find((r) => r.id === compare.cmp) : undefined;
  const asked = search.has("from") || search.has("to");
  const pair = record && asked ? pickRevisionPair(record.revisions, { from: search.get("from"), to: search.get("to") }) : null;
  const derived = await loadDerivedValues(page.material.key, search);
  return { ...page, compare: record && pair ? { recordId: record.id, pair } : null, derived };
}

export default function MaterialPage({ loaderData, params }: Route.ComponentProps) {
  return (
    <div className="space-y-6">
      <MaterialOverview material={loaderData.material} records={loaderData.records} compare={loaderData.compare} action={`/materials/${encodeURIComponent(params.key)}`} />
      {loaderData.derived ? <DerivedValues derived={loaderData.derived.derived} form={loaderData.derived.form} /> : null}
    </div>
  );
}
