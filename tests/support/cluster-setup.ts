import type { TestProject } from "vitest/node";
import { closeDb } from "~/.server/db/client";
import { loadDemo } from "../../seed-data/load";
import { clusterDatabase, createClusterDatabase, dropClusterDatabase, ensureCluster } from "./cluster";

// The cluster project's set-up: the three nodes of scripts/cluster.sh (started, or found running), and one database
// with the demo data that the files share (they run one after another; each works on rows of its own).
export default async function setup(project: TestProject) {
  ensureCluster();
  const name = await createClusterDatabase("shared");
  const c = clusterDatabase(name);
  try {
    await loadDemo(c.db);
  } finally {
    await c.drop();
    await closeDb();
  }
  project.provide("clusterDatabase", name);
  return async () => {
    await dropClusterDatabase(name).catch(() => undefined);
  };
}

declare module "vitest" {
  export interface ProvidedContext {
    clusterDatabase: string;
  }
}
