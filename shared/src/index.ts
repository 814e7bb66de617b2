export * from "./types/report.ts";
export * from "./types/analysis.ts";
export * from "./types/settings.ts";
export * from "./types/api.ts";
export * from "./fingerprint/index.ts";
