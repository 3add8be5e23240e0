export * from "./uncertainty";
export * from "./derive";
export * from "./release";
