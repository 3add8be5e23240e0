export * from "./inputs";
export * from "./report";
export * from "./tolerances";
export * from "./nfe-form";
