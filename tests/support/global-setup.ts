import type { TestProject } from "vitest/node";
import { baseDatabaseUrl, migrationBaseUrl } from "./env";

// Shared by every project: make sure the embedded MariaDB answers before any test file opens a connection.
export default function setup(project: TestProject) {
  const url = baseDatabaseUrl();
  process.env.BANDLEDGER_TEST_BASE_URL = url;
  process.env.BANDLEDGER_TEST_MIGRATION_URL = migrationBaseUrl();
  project.provide("baseDatabaseUrl", url);
}

declare module "vitest" {
  export interface ProvidedContext {
    baseDatabaseUrl: string;
  }
}
