export { AlloyPlot } from "./alloy-plot";
export { DerivedValues } from "./derived-values";
export { TemperaturePlot } from "./temperature-plot";
export { DerivedTable, valueWithUncertainty } from "./derived-table";
export { ReleaseEvaluation } from "./release-evaluation";
