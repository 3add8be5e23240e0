export * from "./constants";
export * from "./verdict";
export * from "./nfe";
export * from "./varshni";
export * from "./alloys";
export * from "./kane";
export { hermitianEigenvalues, symmetricEigenvalues } from "./symmetric-eigenvalues";
export * from "./epm";
export { PhysicsInputError } from "./validate";
