export * from "./catalogue";
export * from "./errors";
export type * from "./executor";
export * from "./queries";
export * from "./records";
export * from "./sources";
