export * from "./assembleReport.ts";
export * from "./jsonReport.ts";
export * from "./csvReport.ts";
export * from "./junitReport.ts";
export * from "./tableReport.ts";
export * from "./reportFormats.ts";
