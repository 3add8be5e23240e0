export * from "./inputs";
export * from "./report";
export * from "./tolerances";
export * from "./nfe-form";
export * from "./epm-run";
export * from "./epm-form";
