import type { z } from "zod";
import type { releaseDetailSchema, releaseSummarySchema, setDetailSchema, setListSchema, setSummarySchema } from "~/domain/api-schemas";
import { listSets, loadSetView, requireRelease, requireSet, type ReleaseSummary, type SetSummary } from "../sets/queries";

function releaseOut(r: ReleaseSummary): z.infer<typeof releaseSummarySchema> {
  const { id: _id, ...rest } = r;
  return rest;
}

function setOut(s: SetSummary): z.infer<typeof setSummarySchema> {
  const { id: _id, latestRelease, ...rest } = s;
  return { ...rest, latestRelease: latestRelease ? releaseOut(latestRelease) : null };
}

export async function setList(): Promise<z.infer<typeof setListSchema>> {
  return { sets: (await listSets()).map(setOut) };
}

export async function setDetail(slug: string): Promise<z.infer<typeof setDetailSchema>> {
  const view = await loadSetView(slug);
  return {
    ...setOut(view.set),
    members: view.members.map((m) => ({ recordId: m.recordId, material: m.material, quantity: m.quantity, status: m.status, current: m.current, sinceLastRelease: m.sinceLastRelease })),
    releases: view.releases.map(releaseOut),
  };
}

export async function releaseDetail(slug: string, number: number): Promise<z.infer<typeof releaseDetailSchema>> {
  const set = await requireSet(slug);
  const release = await requireRelease(set, number);
  const { canonicalJson: _json, csv: _csv, setId: _setId, ...summary } = release;
  return { ...releaseOut(summary), set: { slug: set.slug, name: set.name } };
}
