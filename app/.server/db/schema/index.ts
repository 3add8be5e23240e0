export * from "./auth";
export * from "./registry";
export * from "./workflow";
export * from "./sets";
