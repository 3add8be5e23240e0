import { defineConfig } from "vitest/config";
import { fileURLToPath } from "node:url";

// Its own config: the reactRouter() plugin is for the app build, not for tests.
const alias = { "~": fileURLToPath(new URL("./app", import.meta.url)) };

export default defineConfig({
  resolve: { alias },
  test: {
    projects: [
      {
        resolve: { alias },
        test: { name: "unit", include: ["app/**/*.test.ts", "app/**/*.test.tsx", "tests/unit/**/*.test.ts"], environment: "node" },
      },
      {
        resolve: { alias },
        test: {
          name: "integration",
          globalSetup: ["tests/support/global-setup.ts"],
          include: ["tests/integration/**/*.test.ts"],
          environment: "node",
          testTimeout: 60_000,
          hookTimeout: 120_000,
        },
      },
      {
        resolve: { alias },
        test: {
          name: "browser",
          globalSetup: ["tests/support/global-setup.ts", "tests/support/browser-setup.ts"],
          include: ["tests/browser/**/*.test.ts"],
          environment: "node",
          testTimeout: 90_000,
          hookTimeout: 180_000,
          fileParallelism: false,
        },
      },
      {
        resolve: { alias },
        test: {
          // Faults, races and hostile input. Bounded inside `npm test`; BANDLEDGER_RELIABILITY=full (npm run test:reliability) runs every round.
          name: "reliability",
          globalSetup: ["tests/support/global-setup.ts"],
          include: ["tests/reliability/**/*.test.ts"],
          environment: "node",
          testTimeout: 180_000,
          hookTimeout: 180_000,
          fileParallelism: false,
        },
      },
      {
        resolve: { alias },
        test: {
          // The app on a three-node Galera cluster (scripts/cluster.sh): replication, races across nodes, a node killed.
          // Bounded inside `npm test`; BANDLEDGER_RELIABILITY=full (npm run test:cluster) runs every round.
          name: "cluster",
          globalSetup: ["tests/support/cluster-setup.ts"],
          include: ["tests/cluster/**/*.test.ts"],
          environment: "node",
          testTimeout: 300_000,
          hookTimeout: 300_000,
          fileParallelism: false,
        },
      },
    ],
  },
});
