export * from "./constants";
export * from "./verdict";
export * from "./nfe";
export * from "./varshni";
export * from "./alloys";
export * from "./kane";
export { symmetricEigenvalues } from "./symmetric-eigenvalues";
export { PhysicsInputError } from "./validate";
