export * from "./compute";
export * from "./load";
